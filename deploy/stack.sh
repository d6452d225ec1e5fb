#!/usr/bin/env bash
# A local matgate stack for a demo: a private redis-server (durable settings
# of deploy/redis.conf, its own port and directory), matgate serve and one
# matgate worker, all on loopback, with their state in one directory.
#
#   deploy/stack.sh start [DIR]    build, start, print the MATGATE_TOKEN line
#   deploy/stack.sh status [DIR]
#   deploy/stack.sh stop [DIR]     stop what start started (by its pid files)
#
# DIR defaults to ./matgate-stack. Ports: MATGATE_STACK_REDIS_PORT (6390),
# MATGATE_STACK_HTTP_PORT (8080). Not for production: see deploy/NOTES.md.
set -euo pipefail

cmd=${1:-}
dir=${2:-matgate-stack}
redis_port=${MATGATE_STACK_REDIS_PORT:-6390}
http_port=${MATGATE_STACK_HTTP_PORT:-8080}
repo=$(cd "$(dirname "$0")/.." && pwd)

running() { [ -f "$dir/$1.pid" ] && kill -0 "$(cat "$dir/$1.pid")" 2>/dev/null; }

start() {
  mkdir -p "$dir/redis"
  dir=$(cd "$dir" && pwd)
  command -v redis-server >/dev/null || { echo "stack: redis-server not found (apt-get install redis-server)" >&2; exit 3; }
  for p in redis serve worker; do
    if running $p; then echo "stack: $p already running (pid $(cat "$dir/$p.pid")); stop it first" >&2; exit 3; fi
  done
  echo "stack: building matgate"
  (cd "$repo" && GOFLAGS=-buildvcs=false go build -ldflags "-X main.version=stack-$(date -u +%Y%m%d)" -o "$dir/matgate" ./cmd/matgate)

  echo "stack: redis-server on 127.0.0.1:$redis_port (appendonly, appendfsync always, noeviction, a password)"
  # A random password, kept out of process lists: an included file and the
  # configuration, both mode 600.
  umask 077
  [ -s "$dir/redis-auth.conf" ] || echo "requirepass $(od -An -N32 -tx1 /dev/urandom | tr -d ' \n')" >"$dir/redis-auth.conf"
  umask 022
  export REDISCLI_AUTH=$(sed -n 's/^requirepass //p' "$dir/redis-auth.conf")
  redis-server "$repo/deploy/redis.conf" --port "$redis_port" --bind 127.0.0.1 --dir "$dir/redis" \
    --include "$dir/redis-auth.conf" --daemonize no --logfile "$dir/redis.log" >"$dir/redis.out" 2>&1 &
  echo $! >"$dir/redis.pid"
  for _ in $(seq 100); do
    redis-cli -p "$redis_port" ping >/dev/null 2>&1 && break
    sleep 0.05
  done
  redis-cli -p "$redis_port" ping >/dev/null || { echo "stack: redis-server did not start; see $dir/redis.log and $dir/redis.out" >&2; exit 3; }

  "$dir/matgate" token new demo --scopes submit,read >"$dir/token.txt"
  token=$(grep -o 'mgt_[A-Za-z0-9_-]*' "$dir/token.txt")
  hash=$(sed -n 's/^ *sha256: //p' "$dir/token.txt")
  touch "$dir/matgate.yaml" && chmod 600 "$dir/matgate.yaml"
  cat >"$dir/matgate.yaml" <<CONF
redis:
  url: redis://:$REDISCLI_AUTH@127.0.0.1:$redis_port/0
server:
  listen: 127.0.0.1:$http_port
store:
  dir: $dir/records
auth:
  tokens:
    - name: demo
      sha256: $hash
      scopes: [submit, read]
worker:
  concurrency: 1
CONF
  chmod 600 "$dir/token.txt"
  create=()  # the first start makes the records directory; later ones find its marker
  [ -f "$dir/records/.matgate-store" ] || create=(--create-store)
  "$dir/matgate" serve --config "$dir/matgate.yaml" "${create[@]}" >"$dir/serve.log" 2>&1 &
  echo $! >"$dir/serve.pid"
  "$dir/matgate" worker --config "$dir/matgate.yaml" >"$dir/worker.log" 2>&1 &
  echo $! >"$dir/worker.pid"
  for _ in $(seq 100); do
    curl -fsS "http://127.0.0.1:$http_port/readyz" >/dev/null 2>&1 && break
    sleep 0.1
  done
  curl -fsS "http://127.0.0.1:$http_port/readyz" >/dev/null || { echo "stack: serve is not ready; see $dir/serve.log" >&2; exit 3; }
  echo "stack: serve on http://127.0.0.1:$http_port, one worker; logs and records in $dir"
  echo "stack: the token is shown once here (and kept in $dir/token.txt, mode 600):"
  echo "export MATGATE_TOKEN=$token"
}

stop() {
  for p in worker serve redis; do
    if running $p; then
      kill -TERM "$(cat "$dir/$p.pid")"
      for _ in $(seq 100); do running $p || break; sleep 0.1; done
      running $p && echo "stack: $p did not stop within 10 s (pid $(cat "$dir/$p.pid"))" >&2
      running $p || echo "stack: stopped $p"
    fi
    running $p || rm -f "$dir/$p.pid"
  done
}

status() {
  for p in redis serve worker; do
    if running $p; then echo "$p: running (pid $(cat "$dir/$p.pid"))"; else echo "$p: stopped"; fi
  done
}

case "$cmd" in
  start) start ;;
  stop) stop ;;
  status) status ;;
  *) echo "usage: deploy/stack.sh start|stop|status [DIR]" >&2; exit 2 ;;
esac
