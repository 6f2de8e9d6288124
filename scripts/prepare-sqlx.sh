#!/usr/bin/env bash
# Regenerates the sqlx offline query data in .sqlx/ (committed, so that
# builds and CI need no database). Run after adding a migration or changing
# a query!/query_as! macro.
#
# It builds a scratch SQLite file with every migration applied (plus the
# _sqlx_migrations bookkeeping table that sqlx itself creates), then lets the
# query macros describe their queries against it and write the cache.
set -euo pipefail
cd "$(dirname "$0")/.."
db="$(mktemp -d)/prepare.db"
python3 - "$db" <<'PY'
import glob, sqlite3, sys
con = sqlite3.connect(sys.argv[1])
con.executescript("""
CREATE TABLE _sqlx_migrations (
    version BIGINT PRIMARY KEY,
    description TEXT NOT NULL,
    installed_on TIMESTAMP NOT NULL DEFAULT CURRENT_TIMESTAMP,
    success BOOLEAN NOT NULL,
    checksum BLOB NOT NULL,
    execution_time BIGINT NOT NULL
);
""")
for path in sorted(glob.glob("migrations/*.sql")):
    con.executescript(open(path, encoding="utf-8").read())
con.commit()
PY
rm -rf .sqlx
mkdir -p .sqlx
# Touch a source file so the macros run again even when nothing changed.
touch src/lib.rs
DATABASE_URL="sqlite://$db" SQLX_OFFLINE_DIR="$PWD/.sqlx" cargo check --all-targets --quiet
echo "wrote $(ls .sqlx | wc -l) query files to .sqlx/"
