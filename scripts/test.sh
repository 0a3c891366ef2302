#!/usr/bin/env bash
# Runs every test. Installs the outside references the tests check against when they are
# missing: the ONNX reference checker (Debian's python3-onnx) and PyTorch (python3-torch).
set -euo pipefail
cd "$(dirname "$0")/.."

if ! /usr/bin/python3 -c "import onnx, torch" 2>/dev/null; then
  echo "Installing the Python reference packages (python3-onnx, python3-torch)..."
  SUDO=""
  if [ "$(id -u)" -ne 0 ]; then SUDO="sudo"; fi
  $SUDO apt-get update -q
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -q python3-onnx python3-torch
fi
# A missing reference library must fail the run, never skip a check.
/usr/bin/python3 -c "import onnx, torch; print('references: onnx', onnx.__version__, '/ torch', torch.__version__)"

dotnet test CellCompiler.sln --configuration Release --logger "console;verbosity=normal" "$@"
