#!/usr/bin/env bash
# Make sure Icarus Verilog (iverilog + vvp) is on PATH; install it with the system
# package manager when it is missing (apt-get as root, sudo otherwise).
set -euo pipefail
if command -v iverilog >/dev/null 2>&1 && command -v vvp >/dev/null 2>&1; then
  exit 0
fi
echo "memcheck: Icarus Verilog not found, installing it with apt-get..." >&2
if command -v apt-get >/dev/null 2>&1; then
  if [ "$(id -u)" = "0" ]; then
    SUDO=""
  elif command -v sudo >/dev/null 2>&1; then
    SUDO="sudo"
  else
    echo "memcheck: please install Icarus Verilog (Debian/Ubuntu package 'iverilog') and retry: you are not root and sudo is not available." >&2
    exit 1
  fi
  export DEBIAN_FRONTEND=noninteractive
  $SUDO apt-get update -qq || true
  $SUDO apt-get install -y -qq iverilog >/dev/null
else
  echo "memcheck: please install Icarus Verilog (version 11 or newer, 'iverilog' and 'vvp') and retry: no apt-get on this machine." >&2
  exit 1
fi
command -v iverilog >/dev/null 2>&1 || { echo "memcheck: Icarus Verilog install failed." >&2; exit 1; }
