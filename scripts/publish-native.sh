#!/usr/bin/env bash
# Publishes cellc as a Native AOT program for linux-x64 into artifacts/native/cellc: the `cellc`
# executable (the .NET runtime, the CLI and the library compiled in; no .NET runtime needed to run
# it) beside libonnxruntime.so, libonnxruntime_providers_shared.so and libe_sqlite3.so, which must
# stay in the same folder. Copy or link the whole folder, e.g. to a cluster's shared disk.
# Needs the .NET 10 SDK and a C toolchain (gcc or clang, binutils, libc6-dev); takes one to three
# minutes. NativeBinaryTests runs this folder's cellc and fails when it is missing, so
# scripts/test.sh runs this script before `dotnet test`.
# Usage: scripts/publish-native.sh [OUTPUT_FOLDER]   (default artifacts/native/cellc)
set -euo pipefail
cd "$(dirname "$0")/.."
out=${1:-artifacts/native/cellc}

if ! command -v gcc >/dev/null && ! command -v clang >/dev/null; then
  echo "publish-native: Native AOT links with gcc or clang; neither is on PATH (Debian: apt-get install gcc libc6-dev)" >&2
  exit 3
fi

# Its own build folder, so the ordinary bin/ and obj/ (used by dotnet build and dotnet test) are untouched;
# a fresh output folder, so no file of an earlier publish is left beside the new executable.
build=artifacts/native/build
staging="$out.new"
rm -rf "$staging"
dotnet publish src/CellCompiler.Cli -c Release -r linux-x64 -nologo \
  --artifacts-path "$build" -o "$staging"
rm -rf "$out"
mv "$staging" "$out"

echo "published $out/cellc (cellc $("$out/cellc" --version)); folder $(du -sh "$out" | cut -f1):"
ls -l "$out"
