#!/usr/bin/env bash
# Runs every test of the project on a fresh machine: restores packages, builds, runs the .NET test suites,
# lints the contract (buf lint, buf breaking) and runs the cross-language interoperability test (Node.js client).
# Needs the .NET 10 SDK, Node.js 20+ and npm; npm packages come from the registry on first use.
set -euo pipefail
cd "$(dirname "$0")/.."
(cd tests/interop && [ -d node_modules/@grpc/grpc-js ] || npm ci --no-audit --no-fund)
dotnet restore PathService.sln
dotnet build PathService.sln -c Release --no-restore -nologo
fuzz_report=tests/PathService.Server.Tests/bin/Release/net10.0/fuzz-report.txt
rm -f "$fuzz_report"
dotnet test PathService.sln -c Release --no-build -nologo
# The client library must pack (plug-ins take it as a NuGet package).
dotnet pack src/PathService.Client -c Release --no-build -nologo -o out/packages
# The fuzz suite's case counts (tens of thousands of mutated requests per run).
[ -f "$fuzz_report" ] && cat "$fuzz_report"
bash tests/interop/lint.sh
bash tests/interop/run.sh
