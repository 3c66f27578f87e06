# Sourced by bin/demo, bin/worksheet and bin/check: create or reuse .venv in the repository and put
# it first on PATH. Needs only Python >= 3.11; on Debian without the venv module it installs
# python3-venv when run as root (otherwise it says what to install). Each step prints one line
# ("[feasibly 12 s] ...") so a first run, which downloads packages, is never silent.
set -euo pipefail
STARTED=$SECONDS
# One progress line on stderr with the seconds since the command started.
step() {
    echo "[feasibly $((SECONDS - STARTED)) s] $*" >&2
}
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
VENV="$ROOT/.venv"
PY="${PYTHON:-python3}"
export PIP_DISABLE_PIP_VERSION_CHECK=1

# Run pip quietly: its log goes to .build/pip.log and is shown only when pip fails.
quiet_pip() {
    mkdir -p "$ROOT/.build"
    if ! "$@" >"$ROOT/.build/pip.log" 2>&1; then
        cat "$ROOT/.build/pip.log" >&2
        echo "pip failed (log above, also in .build/pip.log)." >&2
        return 1
    fi
}

if ! "$PY" -c 'import sys; sys.exit(sys.version_info < (3, 11))' 2>/dev/null; then
    echo "feasibly needs Python 3.11 or newer as '$PY' (set PYTHON=/path/to/python3.11)." >&2
    exit 1
fi
if [ ! -x "$VENV/bin/python" ]; then
    step "creating $VENV (first run only)"
    if ! "$PY" -m venv "$VENV" 2>/dev/null; then
        rm -rf "$VENV"
        if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null; then
            ver="$("$PY" -c 'import sys; print(f"{sys.version_info[0]}.{sys.version_info[1]}")')"
            apt-get update -qq && apt-get install -y -qq "python${ver}-venv" >/dev/null
            "$PY" -m venv "$VENV"
        else
            echo "Cannot create a virtual environment: install Debian's python3-venv first." >&2
            exit 1
        fi
    fi
    quiet_pip "$VENV/bin/python" -m pip install --upgrade pip
fi
export PATH="$VENV/bin:$PATH"

# Build the wheel from this checkout and install it (plus the extras named in $1, if any), so that
# what runs is the installed package with its data files, never the source tree.
install_feasibly() {
    local extras="${1:-}"
    rm -rf "$ROOT/.build/wheel"
    step "building feasibly from this checkout (compiles the C kernels)"
    quiet_pip python -m pip wheel --no-deps -w "$ROOT/.build/wheel" "$ROOT"
    local wheel
    wheel="$(ls "$ROOT"/.build/wheel/feasibly-*.whl)"
    if [ -n "$extras" ]; then
        step "installing its dependencies with the extras [$extras] (the first run downloads them)"
        quiet_pip python -m pip install "${wheel}[${extras}]"
    else
        step "installing its dependencies"
        quiet_pip python -m pip install "$wheel"
    fi
    step "installing feasibly itself"
    quiet_pip python -m pip install --force-reinstall --no-deps "$wheel"
    step "installed"
}
