#!/usr/bin/env bash
# tests/api/openapi_check.sh SOURCE_DIR BUILD_DIR
# Validates api/openapi.json against the OpenAPI 3.1 schema with a general-purpose validator
# from the npm registry, @seriousme/openapi-schema-validator, at the versions pinned by
# tests/api/openapi/package-lock.json (npm ci), installed into BUILD_DIR/openapi-check.
# Then checks the validator itself: a copy of the document with one broken schema must fail.
set -euo pipefail
source_dir=$1
tool_dir=$2/openapi-check
pinned=$source_dir/tests/api/openapi
document=$source_dir/api/openapi.json

command -v npm > /dev/null || { echo "openapi_check: npm is missing (deploy/setup.sh test installs it)"; exit 1; }
mkdir -p "$tool_dir"
if ! cmp -s "$pinned/package-lock.json" "$tool_dir/package-lock.json" ||
   [ ! -e "$tool_dir/node_modules/.bin/validate-api" ]; then
  cp "$pinned/package.json" "$pinned/package-lock.json" "$tool_dir/"
  (cd "$tool_dir" && npm ci --no-audit --no-fund --ignore-scripts --loglevel=error)
fi
validate=$tool_dir/node_modules/.bin/validate-api

echo "openapi_check: validating $document"
"$validate" "$document"

broken=$tool_dir/broken.json
node -e '
  const fs = require("fs");
  const doc = JSON.parse(fs.readFileSync(process.argv[1], "utf8"));
  doc.paths["/v1/site"].get.responses["200"].content["application/json"].schema = 5;
  fs.writeFileSync(process.argv[2], JSON.stringify(doc));
' "$document" "$broken"
if "$validate" "$broken" > /dev/null; then
  echo "openapi_check: the validator accepted a document with a broken schema"
  exit 1
fi
echo "openapi_check: the validator refuses a broken copy, as it should"
