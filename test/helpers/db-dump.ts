/**
 * A content dump of every table of a database (schema and rows in a stable order), to prove that an
 * operation left the database unchanged.
 */
import type { Db } from '../../src/store/db.ts';

export function dumpDatabase(db: Db): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  const objects = db
    .prepare(
      "SELECT type, name, sql FROM sqlite_master WHERE name NOT LIKE 'sqlite_autoindex%' ORDER BY type, name",
    )
    .all() as { type: string; name: string; sql: string | null }[];
  out.__schema = objects;
  for (const o of objects) {
    if (o.type !== 'table') continue;
    const cols = (db.prepare(`PRAGMA table_info("${o.name}")`).all() as { name: string }[]).map(
      (c) => `"${c.name}"`,
    );
    const rows = db
      .prepare(`SELECT * FROM "${o.name}" ORDER BY ${cols.join(', ')}`)
      .raw(true)
      .all() as unknown[][];
    out[o.name] = rows.map((r) => r.map((v) => (Buffer.isBuffer(v) ? `x'${v.toString('hex')}'` : v)));
  }
  return out;
}

/** Row count of every table. */
export function rowCounts(db: Db): Record<string, number> {
  const names = db
    .prepare("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name")
    .pluck()
    .all() as string[];
  return Object.fromEntries(
    names.map((n) => [n, db.prepare(`SELECT count(*) FROM "${n}"`).pluck().get() as number]),
  );
}
