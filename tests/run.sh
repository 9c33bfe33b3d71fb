#!/usr/bin/env bash
# The test command: on a fresh machine, install what the tests need (Debian packages included), then run the
# whole suite. Arguments go to pytest (default: -q), e.g. `bash tests/run.sh -x tests/test_units.py`.
# Each step skips what is already there, so running it again costs seconds. Needs root or sudo for apt-get
# only when a Debian package is missing.
set -euo pipefail
cd "$(dirname "$0")/.."

apt_install() {  # Debian packages, each only when missing
    local missing=() pkg
    for pkg in "$@"; do dpkg -s "$pkg" >/dev/null 2>&1 || missing+=("$pkg"); done
    [ ${#missing[@]} -eq 0 ] && return 0
    local sudo=()
    [ "$(id -u)" -eq 0 ] || sudo=(sudo)
    "${sudo[@]}" env DEBIAN_FRONTEND=noninteractive apt-get update -qq
    "${sudo[@]}" env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
}

install_browser() {  # tests/test_docs.py renders /docs in headless Chromium
    command -v chromium >/dev/null 2>&1 || apt_install chromium
}

install_node() {  # tests/test_clients.py: npm installs the TypeScript client's tools (into .cache/), node runs them
    command -v node >/dev/null 2>&1 && command -v npm >/dev/null 2>&1 || apt_install nodejs npm
}

install_python() {  # the service and its test extras, pinned by constraints.txt
    [ -x .venv/bin/python ] || python3 -m venv .venv
    .venv/bin/pip install -q -c constraints.txt -e '.[test]'
}

install_browser
install_node
install_python
exec .venv/bin/pytest "${@:--q}"
