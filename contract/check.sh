#!/usr/bin/env bash
# Type-checks a TypeScript client generated from ../openapi/openapi.json:
# install the pinned tools from package-lock.json, generate
# generated/api.d.ts, and run tsc --noEmit over usage.ts.
set -euo pipefail
cd "$(dirname "$0")"
npm ci --no-audit --no-fund --prefer-offline
npm run --silent generate
npm run --silent typecheck
echo "contract: the generated TypeScript client type-checks usage.ts"
