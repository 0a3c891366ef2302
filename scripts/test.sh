#!/usr/bin/env bash
# Runs every test. Installs the outside references the tests check against when they are
# missing: the ONNX reference checker (Debian's python3-onnx), PyTorch (python3-torch),
# Graphviz (graphviz, parses our DOT output) and Chromium (chromium, opens the HTML report).
set -euo pipefail
cd "$(dirname "$0")/.."

if ! /usr/bin/python3 -c "import onnx, torch" 2>/dev/null || ! command -v dot >/dev/null || [ ! -x /usr/bin/chromium ]; then
  echo "Installing the test references (python3-onnx, python3-torch, graphviz, chromium)..."
  SUDO=""
  if [ "$(id -u)" -ne 0 ]; then SUDO="sudo"; fi
  $SUDO apt-get update -q
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -q python3-onnx python3-torch graphviz chromium
fi
# A missing reference library must fail the run, never skip a check.
/usr/bin/python3 -c "import onnx, torch; print('references: onnx', onnx.__version__, '/ torch', torch.__version__)"
dot -V
/usr/bin/chromium --version

dotnet test CellCompiler.sln --configuration Release --logger "console;verbosity=normal" "$@"
