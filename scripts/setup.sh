#!/usr/bin/env bash
# Idempotent set-up for a fresh Debian 12 machine (run as root, or with sudo available):
# installs only the missing Debian packages, then configures (Release, warnings on) and builds.
set -euo pipefail
cd "$(dirname "$0")/.."

packages=(
  build-essential cmake pkg-config
  libeigen3-dev libsndfile1-dev libhdf5-dev libtomlplusplus-dev catch2
  libcli11-dev nlohmann-json3-dev librandom123-dev libsoxr-dev libfftw3-dev zlib1g-dev libssl-dev libfmt-dev
  python3-numpy python3-scipy python3-h5py python3-soundfile python3-mir-eval python3-matplotlib
  clang libclang-rt-14-dev e2fsprogs util-linux
  munge slurm-wlm
)

missing=()
for p in "${packages[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done

if [ ${#missing[@]} -gt 0 ]; then
  echo "setup: installing ${missing[*]}"
  sudo_cmd=""
  [ "$(id -u)" -eq 0 ] || sudo_cmd="sudo"
  $sudo_cmd apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $sudo_cmd apt-get install -y -qq --no-install-recommends "${missing[@]}"
else
  echo "setup: all Debian packages present"
fi

build_dir="${STETHOGEN_BUILD_DIR:-build}"
cmake -S . -B "$build_dir" -DCMAKE_BUILD_TYPE=Release -DSTETHOGEN_BUILD_TESTS=ON >/dev/null
cmake --build "$build_dir" -j "$(nproc)"
