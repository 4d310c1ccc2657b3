#!/usr/bin/env bash
# Extracts and runs the test command from README.md (the line after the marker), so that
# CI runs exactly what a new user copies.
set -euo pipefail
cd "$(dirname "$0")/.."
cmd=$(awk '/<!-- test-command -->/{getline; getline; print; exit}' README.md)
if [ -z "$cmd" ]; then
    echo "README.md has no test command after <!-- test-command -->" >&2
    exit 1
fi
echo "+ $cmd"
bash -c "set -euo pipefail; $cmd"
