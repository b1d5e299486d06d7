#!/usr/bin/env bash
# Installs the real VS Code host the integration tests drive: code-server (in an ignored cache folder,
# outside the project's dependency tree) and Debian's chromium. Idempotent: a fast no-op when both
# are already in place. Network: the npm registry and Debian's archive only.
set -euo pipefail

CODE_SERVER_VERSION=4.100.3
RIPGREP_PKG_VERSION=1.15.11
RIPGREP_ASSET=ripgrep-v13.0.0-10-x86_64-unknown-linux-musl.tar.gz

ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)"
CACHE="$ROOT/.cache/code-server"
BIN="$CACHE/node_modules/.bin/code-server"
# Written only after a complete install, so an interrupted one is redone rather than trusted.
MARKER="$CACHE/.installed-$CODE_SERVER_VERSION"

apt_updated=0
apt_install() {
  # Install Debian packages only when missing; `apt-get update` once, first.
  local missing=()
  for pkg in "$@"; do
    dpkg-query -W -f='${Status}' "$pkg" 2>/dev/null | grep -q 'install ok installed' || missing+=("$pkg")
  done
  [ ${#missing[@]} -eq 0 ] && return 0
  if [ "$(id -u)" -ne 0 ]; then
    echo "setup-code-server: need root to install Debian packages: ${missing[*]}" >&2
    exit 1
  fi
  if [ $apt_updated -eq 0 ]; then
    DEBIAN_FRONTEND=noninteractive apt-get update -y
    apt_updated=1
  fi
  echo "setup-code-server: apt-get install ${missing[*]}"
  DEBIAN_FRONTEND=noninteractive apt-get install -y --no-install-recommends "${missing[@]}"
}

installed_version() {
  node -e 'try{console.log(require(process.argv[1]).version)}catch{console.log("")}' \
    "$CACHE/node_modules/code-server/package.json"
}

if [ ! -x /usr/bin/chromium ]; then
  apt_install chromium
fi

if [ -x "$BIN" ] && [ -f "$MARKER" ] && [ "$(installed_version)" = "$CODE_SERVER_VERSION" ]; then
  echo "setup-code-server: code-server $CODE_SERVER_VERSION and chromium already installed"
  exit 0
fi

# code-server compiles a native module against gssapi, and its ripgrep dependency would download a
# binary: offer it Debian's rg as the cached download it looks for first.
apt_install libkrb5-dev ripgrep

mkdir -p "$CACHE/tmp"
export TMPDIR="$CACHE/tmp"
rg_cache="$TMPDIR/vscode-ripgrep-cache-$RIPGREP_PKG_VERSION"
if [ ! -s "$rg_cache/$RIPGREP_ASSET" ]; then
  mkdir -p "$rg_cache"
  stage="$(mktemp -d)"
  cp "$(command -v rg)" "$stage/rg"
  tar -czf "$rg_cache/$RIPGREP_ASSET" -C "$stage" rg
  rm -rf "$stage"
fi

cd "$CACHE"
rm -rf node_modules package-lock.json "$MARKER"
[ -f package.json ] || printf '{\n  "name": "cachewright-test-host",\n  "private": true\n}\n' > package.json
echo "setup-code-server: npm install code-server@$CODE_SERVER_VERSION (about a minute)"
# Root with no TTY: the postinstall refuses root without unsafe-perm, and a nested npx would ask.
# code-server's postinstall runs a nested `npm install` in its bundled editor, whose native modules
# need their install scripts; npm 11 blocks dependency scripts unless approved, and the nested
# package.json cannot carry approvals, so this one pinned install into its own folder allows them
# (older npm versions ignore the setting).
npm_config_unsafe_perm=true npm_config_yes=true npm_config_dangerously_allow_all_scripts=true \
  npm install --save-exact --no-audit --no-fund "code-server@$CODE_SERVER_VERSION"

if [ ! -x "$BIN" ]; then
  echo "setup-code-server: code-server did not install ($BIN missing)" >&2
  exit 1
fi
if [ ! -d "$CACHE/node_modules/code-server/lib/vscode/node_modules" ]; then
  echo "setup-code-server: code-server's postinstall did not install its editor's modules" >&2
  exit 1
fi
touch "$MARKER"
echo "setup-code-server: code-server $(installed_version) ready at $BIN"
