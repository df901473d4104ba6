#!/usr/bin/env bash
# Crash recovery on PostgreSQL (fsync on): builds the app and the load driver in Release, then
# drives expert submissions while the app is killed with SIGKILL twice and restarted, and checks
# that every submission acknowledged with a 2xx is in the database. Exit code 1 when one is missing.
# Extra options go to the driver, e.g. bench/crash-recovery.sh --clients 32 --kills 3.
set -euo pipefail
cd "$(dirname "$0")/.."
dotnet build -c Release src/PanelRound.Web -v q -nologo >/dev/null
dotnet build -c Release bench/PanelRound.Load -v q -nologo >/dev/null
dotnet bench/PanelRound.Load/bin/Release/net10.0/PanelRound.Load.dll crash-recovery \
  --app src/PanelRound.Web/bin/Release/net10.0/PanelRound.Web.dll "$@"
