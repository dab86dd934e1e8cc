#!/usr/bin/env bash
# Make a headless browser available for the report's print-to-PDF test.
#
# Installs Debian's chromium with apt-get only where no chromium, chromium-browser or
# google-chrome binary is on PATH. Never fails the CI run: when the install is not
# possible it prints why and exits 0 (the browser test then skips with its reason).

for b in chromium chromium-browser google-chrome; do
    if command -v "$b" >/dev/null 2>&1; then
        echo "browser.sh: found $b at $(command -v "$b"); nothing to install"
        exit 0
    fi
done

if ! command -v apt-get >/dev/null 2>&1; then
    echo "browser.sh: no chromium found and no apt-get on this machine; the browser test will skip"
    exit 0
fi

if [ "$(id -u)" -ne 0 ]; then
    if command -v sudo >/dev/null 2>&1 && sudo -n true 2>/dev/null; then
        SUDO="sudo -n"
    else
        echo "browser.sh: no chromium found and not root (no password-less sudo); the browser test will skip"
        exit 0
    fi
else
    SUDO=""
fi

echo "browser.sh: no chromium found; installing Debian's chromium with apt-get"
export DEBIAN_FRONTEND=noninteractive
if ! $SUDO apt-get update -q >/tmp/browser-apt-update.log 2>&1; then
    echo "browser.sh: apt-get update failed (see below); the browser test will skip"
    tail -n 5 /tmp/browser-apt-update.log
    exit 0
fi
if ! $SUDO apt-get install -y -q --no-install-recommends chromium >/tmp/browser-apt-install.log 2>&1; then
    echo "browser.sh: apt-get install chromium failed (see below); the browser test will skip"
    tail -n 5 /tmp/browser-apt-install.log
    exit 0
fi
if command -v chromium >/dev/null 2>&1; then
    echo "browser.sh: installed $(chromium --version 2>/dev/null || echo chromium)"
else
    echo "browser.sh: apt-get finished but no chromium binary is on PATH; the browser test will skip"
fi
exit 0
