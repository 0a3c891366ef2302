using System.Runtime.InteropServices;

namespace CellCompiler.Io;

/// <summary>
/// What kind of thing a path names, following symbolic links. .NET reports devices and pipes as
/// ordinary files, and renaming a temporary file over /dev/null or a pipe would replace it, so the
/// type bits are read with Linux's statx, whose layout is the same on every architecture.
/// </summary>
internal static class FileKind
{
    private const int AtCurrentDirectory = -100;
    private const uint StatxType = 0x1;
    private const int ModeOffset = 28;
    private const int TypeMask = 0xF000;
    private const int RegularFile = 0x8000;

    /// <summary>True when <paramref name="path"/> exists and is not a regular file or a folder (a device, a pipe, a socket).</summary>
    public static bool IsSpecial(string path)
    {
        if (!OperatingSystem.IsLinux()) return false;
        var buffer = new byte[256];
        try
        {
            if (Statx(AtCurrentDirectory, path, 0, StatxType, buffer) != 0) return false; // missing: a new regular file
        }
        catch (Exception e) when (e is DllNotFoundException or EntryPointNotFoundException)
        {
            return false; // a C library without statx (older than glibc 2.28): replace as before
        }
        var type = BitConverter.ToUInt16(buffer, ModeOffset) & TypeMask;
        return type != RegularFile && !Directory.Exists(path);
    }

    // DllImport rather than LibraryImport: the latter needs unsafe code enabled for the whole library.
    [DllImport("libc", EntryPoint = "statx")]
    private static extern int Statx(int directory, [MarshalAs(UnmanagedType.LPUTF8Str)] string path, int flags, uint mask, [Out] byte[] buffer);
}
