#!/usr/bin/env bash
# Work-in-progress helper: regenerates drizzle/0001_newsroom.sql from schema.ts while the
# newsroom tables are still being shaped. Delete once the migration has landed.
set -euo pipefail
cd "$(dirname "$0")/.."
rm -f drizzle/0001_newsroom.sql drizzle/meta/0001_snapshot.json
node -e "
const fs = require('fs');
const p = 'drizzle/meta/_journal.json';
const j = JSON.parse(fs.readFileSync(p, 'utf8'));
j.entries = j.entries.filter((e) => e.tag !== '0001_newsroom');
fs.writeFileSync(p, JSON.stringify(j, null, 2));
"
npx drizzle-kit generate --name newsroom
