using System.Runtime.InteropServices;

namespace CellCompiler.Runtime;

/// <summary>
/// Keeps the memory ONNX Runtime frees for the next session. Every session allocates its graph,
/// kernels and weights from the C library's heap and frees them all on disposal; by default the heap
/// then hands its top back to the system, and the next session pays a page fault for every page again.
/// On this project's build machine (a virtual machine, where a fault costs microseconds) a top pad of
/// 64 MiB removed about 200 of the 850 faults of a tidepool-h3 check (proxy) and about a tenth of its CPU time
/// (README, per-candidate check benchmark). Only the GNU C library has this setting; elsewhere nothing changes.
/// </summary>
internal static class NativeHeap
{
    /// <summary>glibc's M_TOP_PAD: free memory kept at the top of the heap when it shrinks (and added when it grows).</summary>
    private const int TopPadParameter = -2;
    private const int TopPadBytes = 64 << 20;

    private static readonly bool Kept = Keep();

    /// <summary>Applies the setting once per process, before the first session (safe to call from any thread).</summary>
    public static void KeepFreedMemory() => _ = Kept;

    private static bool Keep()
    {
        if (!OperatingSystem.IsLinux()) return false;
        try
        {
            return Mallopt(TopPadParameter, TopPadBytes) == 1;
        }
        catch (Exception e) when (e is DllNotFoundException or EntryPointNotFoundException)
        {
            return false; // another C library (musl): its heap keeps its own defaults
        }
    }

    // DllImport rather than LibraryImport: the latter needs unsafe code enabled for the whole library.
    [DllImport("libc", EntryPoint = "mallopt")]
    private static extern int Mallopt(int parameter, int value);
}
