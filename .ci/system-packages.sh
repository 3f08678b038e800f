#!/usr/bin/env bash
# System packages for optional tests:
#   libreoffice-calc-nogui  a second PDF generator (XLSX -> PDF, headless) for the PDF ingest tests
#   chromium                the HTML report tests
# Installs with apt-get only what is missing, and only when running as root with apt-get present.
# Never fails the CI: when something cannot be installed it prints a note, and the tests that need
# it skip with a reason.
set -u

have() { command -v "$1" >/dev/null 2>&1; }

need=()
have soffice || have libreoffice || need+=("libreoffice-calc-nogui")
have chromium || have chromium-browser || need+=("chromium")

if [ "${#need[@]}" -eq 0 ]; then
  echo "system packages: LibreOffice and Chromium present"
  exit 0
fi
if [ "$(id -u)" -ne 0 ]; then
  echo "note: not running as root; not installing ${need[*]} (the tests that need them will skip)"
  exit 0
fi
if ! have apt-get; then
  echo "note: apt-get not available; not installing ${need[*]} (the tests that need them will skip)"
  exit 0
fi

export DEBIAN_FRONTEND=noninteractive
if ! apt-get update -qq >/dev/null 2>&1; then
  echo "note: apt-get update failed; trying to install from the cached package lists"
fi
for pkg in "${need[@]}"; do
  echo "system packages: installing $pkg"
  if ! apt-get install -y -qq "$pkg" >/dev/null 2>&1; then
    echo "note: could not install $pkg (the tests that need it will skip)"
  fi
done
exit 0
