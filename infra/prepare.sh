#!/usr/bin/env bash
# First half of `npm start` / `npm test`: bring a fresh machine up to what infra/start.ts and
# infra/test.ts need. Plain bash because a fresh clone has no node_modules, hence no tsx yet.
# Idempotent and quiet when nothing is missing, so the second run costs well under a second.
set -euo pipefail
cd "$(dirname "$0")/.."

say() { printf 'prepare: %s\n' "$*"; }
fail() { printf 'prepare: error: %s\n' "$*" >&2; exit 1; }

# 1. npm dependencies: `npm ci` when node_modules is missing or older than the lock file.
#    npm writes node_modules/.package-lock.json after each install, so its age is the install's age.
#    A node_modules that is a link (a second worktree sharing the first one's install) belongs to
#    the checkout it points into: reinstalling here would wipe it under the other checkout's feet.
if [ -L node_modules ]; then
  [ -f node_modules/.package-lock.json ] || fail "node_modules links to an empty install; run npm ci where it points"
elif [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
  # Say why: a reinstall in a checkout that already has node_modules is otherwise a surprise.
  if [ -f node_modules/.package-lock.json ]; then
    say "package-lock.json ($(date -r package-lock.json '+%F %T')) is newer than the installed dependencies ($(date -r node_modules/.package-lock.json '+%F %T'))"
    say "reinstalling them with npm ci (a clean install from the lock file; about a minute)"
  else
    say "installing npm dependencies with npm ci (first run; about a minute)"
  fi
  npm ci --no-audit --no-fund
  touch node_modules/.package-lock.json
fi

# 2. Debian packages, only those missing. apt-get update runs at most once, and only when needed.
missing=()
command -v redis-server >/dev/null 2>&1 || missing+=(redis-server)
command -v chromium >/dev/null 2>&1 || missing+=(chromium)
if [ "${#missing[@]}" -gt 0 ]; then
  [ "$(id -u)" -eq 0 ] || fail "missing ${missing[*]}; run as root or install them: apt-get install -y ${missing[*]}"
  say "installing Debian packages: ${missing[*]}"
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq
  apt-get install -y -qq "${missing[@]}" >/dev/null
fi

# 3. PostgreSQL server binaries (the Debian postgresql-15 package): not on PATH, found via pg_config.
command -v pg_config >/dev/null 2>&1 || fail "pg_config not found; install the Debian package postgresql-15"
bindir="$(pg_config --bindir)"
[ -x "$bindir/initdb" ] && [ -x "$bindir/pg_ctl" ] || fail "no initdb/pg_ctl in $bindir; install the Debian package postgresql-15"
# PostgreSQL refuses to run as root, so the cluster runs as the postgres system user.
if [ "$(id -u)" -eq 0 ] && ! id -u postgres >/dev/null 2>&1; then
  fail "no 'postgres' system user; the postgresql-15 package creates it"
fi
exit 0
