#!/usr/bin/env bash
# The main job on the built-in demo, end to end on one machine: builds the server and the pathtrace client, starts
# the server on a free loopback port, streams the market-hall dome's equilibrium path over gRPC (printed point by
# point as it converges), writes the tables and pictures to out/demo/, then traces the rigid-jointed lattice-shell
# example on the same server into out/demo/lattice-shell/, and stops the server.
set -euo pipefail
cd "$(dirname "$0")/.."
out="${1:-out/demo}"
dotnet build src/PathService.Server -c Release -nologo -v q
dotnet build src/PathService.Cli -c Release -nologo -v q
bin="$(pwd)/src/PathService.Server/bin/Release/net10.0"
log="$(mktemp)"
dotnet "$bin/PathService.Server.dll" --contentRoot "$bin" \
  --PathService:ListenAddress=127.0.0.1 --PathService:GrpcPort=0 --PathService:HttpPort=-1 >"$log" 2>&1 &
server=$!
trap 'kill $server 2>/dev/null || true; wait $server 2>/dev/null || true; rm -f "$log"' EXIT
url=""
for _ in $(seq 1 120); do
  url="$(grep -o '"GrpcUrl":"http://[0-9.]*:[0-9]*"' "$log" | head -n 1 | sed 's/"GrpcUrl":"//; s/"$//' || true)"
  [ -n "$url" ] && break
  kill -0 $server 2>/dev/null || { cat "$log"; echo "the server did not start" >&2; exit 1; }
  sleep 0.5
done
[ -n "$url" ] || { cat "$log"; echo "the server did not report its port" >&2; exit 1; }
echo "PathService listening on $url"
dotnet src/PathService.Cli/bin/Release/net10.0/pathtrace.dll demo --server "$url" --out "$out"
echo "open $out/curve.svg (equilibrium path) and $out/shape.svg (deformed shape); tables in $out/path.csv and $out/summary.json"
# A rigid-jointed frame on the same server: the pavilion lattice shell snapping through (examples/README.md).
dotnet src/PathService.Cli/bin/Release/net10.0/pathtrace.dll trace examples/pavilion-lattice-shell.json --server "$url" --out "$out/lattice-shell" --quiet
echo "the lattice shell: $out/lattice-shell/curve.svg, $out/lattice-shell/shape.svg (tubes as hollow lines, bending as rings), $out/lattice-shell/beam-forces.csv"
