#!/usr/bin/env bash
# Runs every test. Installs the outside references the tests check against when they are
# missing: the ONNX reference checker (Debian's python3-onnx), PyTorch and torchvision
# (python3-torch, python3-torchvision), OpenCV's DNN module as a second ONNX engine
# (python3-opencv), NetworkX's graph isomorphism (python3-networkx), Graphviz (graphviz, parses
# our DOT output), Chromium (chromium, opens the HTML report) and Slurm with munge (slurm-wlm,
# munge: a real scheduler runs the cluster example), and a C toolchain (gcc, libc6-dev) to link the
# native program that the tool package ships and NativeBinaryTests run.
set -euo pipefail
cd "$(dirname "$0")/.."

PACKAGES="python3-onnx python3-torch python3-torchvision python3-opencv python3-networkx graphviz chromium slurm-wlm munge gcc libc6-dev"
if ! /usr/bin/python3 -c "import onnx, torch, torchvision, cv2, networkx" 2>/dev/null || ! command -v dot >/dev/null \
   || [ ! -x /usr/bin/chromium ] || ! command -v slurmctld >/dev/null || ! command -v munged >/dev/null \
   || ! command -v gcc >/dev/null; then
  echo "Installing the test references ($PACKAGES)..."
  SUDO=""
  if [ "$(id -u)" -ne 0 ]; then SUDO="sudo"; fi
  $SUDO apt-get update -q
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -q $PACKAGES
fi
# A missing reference library must fail the run, never skip a check.
/usr/bin/python3 -c "import onnx, torch, torchvision, cv2, networkx; print('references: onnx', onnx.__version__, '/ torch', torch.__version__, '/ torchvision', torchvision.__version__, '/ opencv', cv2.__version__, '/ networkx', networkx.__version__)"
dot -V
/usr/bin/chromium --version

# The native program of this commit, for NativeBinaryTests (about 2 minutes).
scripts/publish-native.sh
dotnet test CellCompiler.sln --configuration Release --logger "console;verbosity=normal" "$@"
