#!/usr/bin/env bash
# Make sure Verilator and Yosys (used by `memcheck bist lint` and its tests) are on PATH; install
# them from the system's packages with apt-get when missing (as root, or with sudo). Neither is
# needed by `memcheck bist generate`; a machine without apt-get gets a note, not a failure.
set -euo pipefail
missing=()
command -v verilator >/dev/null 2>&1 || missing+=(verilator)
command -v yosys >/dev/null 2>&1 || missing+=(yosys)
if [ "${#missing[@]}" = "0" ]; then
  exit 0
fi
echo "memcheck: ${missing[*]} not found, installing with apt-get (needed by 'memcheck bist lint')..." >&2
if ! command -v apt-get >/dev/null 2>&1; then
  echo "memcheck: please install ${missing[*]} ('memcheck bist lint' needs them): no apt-get on this machine." >&2
  exit 0
fi
if [ "$(id -u)" = "0" ]; then
  SUDO=""
elif command -v sudo >/dev/null 2>&1; then
  SUDO="sudo"
else
  echo "memcheck: please install ${missing[*]} (Debian/Ubuntu packages) and retry: you are not root and sudo is not available." >&2
  exit 0
fi
export DEBIAN_FRONTEND=noninteractive
$SUDO apt-get update -qq || true
$SUDO apt-get install -y -qq "${missing[@]}" >/dev/null
for tool in "${missing[@]}"; do
  command -v "$tool" >/dev/null 2>&1 || { echo "memcheck: installing $tool failed." >&2; exit 1; }
done
