#!/usr/bin/env bash
# Interop test: builds the server, starts it on a free loopback port, waits for its health service, runs the Node.js
# client against it and stops the server. Exits non-zero when any step fails.
set -euo pipefail
here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
root="$(cd "$here/../.." && pwd)"
cd "$here"

[ -d node_modules/@grpc/grpc-js ] || npm ci --no-audit --no-fund

dotnet build "$root/src/PathService.Server/PathService.Server.csproj" -c Release -nologo -v q
bin="$root/src/PathService.Server/bin/Release/net10.0"
port="$(node -e 'const s=require("net").createServer();s.listen(0,"127.0.0.1",()=>{console.log(s.address().port);s.close()})')"
log="$(mktemp)"

dotnet "$bin/PathService.Server.dll" --contentRoot "$bin" \
  --PathService:ListenAddress=127.0.0.1 --PathService:GrpcPort="$port" --PathService:HttpPort=-1 >"$log" 2>&1 &
server=$!
stop() { kill "$server" 2>/dev/null || true; wait "$server" 2>/dev/null || true; rm -f "$log"; }
trap stop EXIT

if ! node wait-health.js "127.0.0.1:$port" 60; then tail -n 40 "$log"; exit 1; fi
if ! node trace-client.js "127.0.0.1:$port"; then tail -n 40 "$log"; exit 1; fi
