#!/usr/bin/env bash
# First-time setup for the real-VS-Code tests: installs code-server (VS Code in a browser) from the npm registry
# into the git-ignored folder .harness/cs, pinned. Idempotent: a second run that finds the right version exits at once.
#   usage: scripts/setup-code-server.sh [DEST]
# Needs the Debian packages ripgrep and libkrb5-dev (and chromium for the UI tests); .ci/run installs them as root.
# code-server's own install scripts fetch prebuilt binaries from outside the npm registry, so they are replayed by hand.
set -euo pipefail
ROOT="$(cd "$(dirname "$0")/.." && pwd)"
DEST="${1:-$ROOT/.harness/cs}"
VER="4.100.3"   # VS Code 1.100.3: the newest code-server whose engines accept Node 20
ENTRY="$DEST/node_modules/code-server/out/node/entry.js"

if [ -f "$ENTRY" ] && XDG_CONFIG_HOME="$DEST/.xdg/config" XDG_DATA_HOME="$DEST/.xdg/data" node "$ENTRY" --version 2>/dev/null | grep -q "^$VER "; then
  echo "code-server $VER already installed in $DEST"; exit 0
fi
missing=()
command -v rg >/dev/null || missing+=(ripgrep)
[ -e /usr/include/gssapi/gssapi.h ] || missing+=(libkrb5-dev)
if [ ${#missing[@]} -gt 0 ]; then
  echo "setup-code-server: missing Debian packages: ${missing[*]}. Install them with: apt-get install -y ${missing[*]}" >&2
  exit 1
fi
rm -rf "$DEST"; mkdir -p "$DEST"; cd "$DEST"
echo '{"name":"cs-host","version":"0.0.0","private":true}' > package.json
# top-level package without scripts (its postinstall would run a nested install that downloads ripgrep)
npm install --ignore-scripts --no-audit --no-fund --loglevel=error "code-server@$VER"
npm rebuild argon2 --loglevel=error          # prebuilt download fails offline -> falls back to a node-gyp build
cd node_modules/code-server/lib/vscode
npm install --omit=dev --ignore-scripts --no-audit --no-fund --loglevel=error
mkdir -p node_modules/@vscode/ripgrep/bin
cp "$(command -v rg)" node_modules/@vscode/ripgrep/bin/rg
npm_config_yes=true npm rebuild --loglevel=error    # node-pty, spdlog, kerberos, ... built with node-gyp
rm -rf node_modules.asar && ln -s node_modules node_modules.asar
( cd bin/remote-cli && rm -f code-server && ln -s code-linux.sh code-server )
( cd bin/helpers && rm -f browser.sh && ln -s browser-linux.sh browser.sh )
( cd extensions && npm install --omit=dev --no-audit --no-fund --loglevel=error )
cd "$DEST"
XDG_CONFIG_HOME="$DEST/.xdg/config" XDG_DATA_HOME="$DEST/.xdg/data" node "$ENTRY" --version
