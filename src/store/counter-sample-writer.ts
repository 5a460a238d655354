/**
 * The counter-sample import's statements (table counter_samples, migration 0004), used inside the
 * import's one transaction by src/ingest/kinds/counter-session.ts.
 *
 * Rows whose key is new by construction (the caller knows: later than every sample of their counter
 * in the file and every sample stored before at their location) wait in a batch and are written
 * `batchRows` per INSERT statement; every other row goes alone through an INSERT that does nothing on
 * a key conflict, so that a duplicate is found and counted. A batched row that conflicts is a fault
 * and fails loudly (no ON CONFLICT clause there).
 *
 * Where the time goes (bench/import.ts, 10⁶ rows): binding the values is a large part of an INSERT's
 * cost through better-sqlite3, so the batch is wide (512 rows by default, fewer statements), the two
 * values fixed for a whole file (channel set, import) are written into the statement's text as
 * integer literals instead of being bound for every row, and the counts BLOBs are views into one
 * reused buffer (no allocation per row; SQLite copies a BLOB when it is bound).
 */
import type { Statement } from 'better-sqlite3';
import type { Db } from './db.ts';

const COLUMNS = `location, start_ms, counter, duration_ms, volume_m3, channel_set, counts, flags, room_state,
  import_id, line`;
/** Values bound per row (location, start, counter, duration, volume, counts, flags, room state, line). */
const PER_ROW = 9;

export interface CounterSampleWriterOptions {
  importId: number;
  channelSet: number;
  /** Channels per sample (doubles in each counts BLOB). */
  channels: number;
  /** Rows per batched INSERT (1: every row alone, the plain twin the tests compare against). */
  batchRows: number;
}

/** A stored sample with the key of a row being written (for duplicate accounting). */
export interface PriorSample {
  import_id: number;
  counts: Buffer;
  channel_set: number;
}

export class CounterSampleWriter {
  private readonly db: Db;
  private readonly opts: CounterSampleWriterOptions;
  private readonly rowSql: string;
  private readonly insertChecked: Statement;
  /** Batched INSERTs by row count (powers of two up to batchRows, and batchRows itself), prepared on use. */
  private readonly batchStmts = new Map<number, Statement>();
  private readonly pending: unknown[];
  private pendingRows = 0;
  /** One reused buffer for the counts of the pending rows, and one view per row slot. */
  private readonly countsViews: Buffer[];
  private readonly countsArrays: Float64Array[];
  private readonly loneCounts: Buffer;
  private readonly loneArray: Float64Array;
  private readonly locStmt: Statement;
  private readonly counterGet: Statement;
  private readonly counterAdd: Statement;
  private readonly storedMaxStmt: Statement;
  private readonly existingStmt: Statement;
  private readonly orFlagsStmt: Statement;
  private readonly orFlagsAtStmt: Statement;
  private readonly locCache = new Map<string, number | null>();
  private readonly counterCache = new Map<string, number>();
  private readonly latestBefore = new Map<number, number>();

  constructor(db: Db, opts: CounterSampleWriterOptions) {
    this.db = db;
    const batchRows = Math.max(1, Math.floor(opts.batchRows));
    this.opts = { ...opts, batchRows };
    const setId = Math.trunc(opts.channelSet);
    const importId = Math.trunc(opts.importId);
    // Integer literals from the database's own row ids (never text from a file).
    this.rowSql = `(?, ?, ?, ?, ?, ${setId}, ?, ?, ?, ${importId}, ?)`;
    this.insertChecked = db.prepare(
      // ON CONFLICT on the key only (OR IGNORE would also swallow NOT NULL and CHECK failures).
      `INSERT INTO counter_samples (${COLUMNS}) VALUES ${this.rowSql}
       ON CONFLICT (location, start_ms, counter, duration_ms) DO NOTHING`,
    );
    this.pending = new Array(batchRows * PER_ROW);
    const k = opts.channels;
    const buf = Buffer.alloc(8 * k * batchRows);
    this.countsViews = [];
    this.countsArrays = [];
    for (let r = 0; r < batchRows; r++) {
      this.countsViews.push(buf.subarray(8 * k * r, 8 * k * (r + 1)));
      this.countsArrays.push(new Float64Array(buf.buffer, buf.byteOffset + 8 * k * r, k));
    }
    this.loneCounts = Buffer.alloc(8 * k);
    this.loneArray = new Float64Array(this.loneCounts.buffer, this.loneCounts.byteOffset, k);
    this.locStmt = db.prepare('SELECT id FROM locations WHERE location_id = ?').pluck();
    this.counterGet = db.prepare('SELECT id FROM counters WHERE counter_id = ?').pluck();
    this.counterAdd = db.prepare('INSERT INTO counters (counter_id) VALUES (?)');
    this.storedMaxStmt = db.prepare('SELECT max(start_ms) FROM counter_samples WHERE location = ?').pluck();
    this.existingStmt = db.prepare(
      'SELECT import_id, counts, channel_set FROM counter_samples WHERE location = ? AND start_ms = ? AND counter = ? AND duration_ms = ?',
    );
    this.orFlagsStmt = db.prepare(
      `UPDATE counter_samples SET flags = flags | ? WHERE location = ? AND counter = ? AND start_ms >= ? AND start_ms <= ?
         AND import_id = ?`,
    );
    this.orFlagsAtStmt = db.prepare(
      'UPDATE counter_samples SET flags = flags | ? WHERE location = ? AND counter = ? AND start_ms = ? AND import_id = ?',
    );
  }

  /** The row id of a stored location, or null when there is none (looked up once per name). */
  locationId(name: string): number | null {
    let loc = this.locCache.get(name);
    if (loc === undefined) {
      loc = (this.locStmt.get(name) as number | undefined) ?? null;
      this.locCache.set(name, loc);
    }
    return loc;
  }

  /** The row id of a counter, added when it is new (looked up once per name). */
  counterId(name: string): number {
    let counter = this.counterCache.get(name);
    if (counter === undefined) {
      counter = this.counterGet.get(name) as number | undefined;
      if (counter === undefined) counter = Number(this.counterAdd.run(name).lastInsertRowid);
      this.counterCache.set(name, counter);
    }
    return counter;
  }

  /** The latest sample start stored at a location before this import wrote to it (−∞ when none). */
  latestStoredBefore(loc: number): number {
    let before = this.latestBefore.get(loc);
    if (before === undefined) {
      before = (this.storedMaxStmt.get(loc) as number | null) ?? Number.NEGATIVE_INFINITY;
      this.latestBefore.set(loc, before);
    }
    return before;
  }

  /** Whether rows with a new key are batched at all (false in the plain twin). */
  get batching(): boolean {
    return this.opts.batchRows > 1;
  }

  /** A row whose key is new: joins the batch. */
  addNew(
    counts: Float64Array,
    loc: number,
    start: number,
    counter: number,
    durationMs: number,
    volumeM3: number,
    flags: number,
    room: number,
    line: number,
  ): void {
    const p = this.pending;
    const r = this.pendingRows;
    let i = r * PER_ROW;
    p[i++] = loc;
    p[i++] = start;
    p[i++] = counter;
    p[i++] = durationMs;
    p[i++] = volumeM3;
    this.countsArrays[r]!.set(counts);
    p[i++] = this.countsViews[r];
    p[i++] = flags;
    p[i++] = room;
    p[i] = line;
    if (++this.pendingRows === this.opts.batchRows) this.flush();
  }

  /**
   * A row whose key may already be stored: written alone after the batch. Returns false when the
   * key was taken (nothing written).
   */
  addChecked(
    counts: Float64Array,
    loc: number,
    start: number,
    counter: number,
    durationMs: number,
    volumeM3: number,
    flags: number,
    room: number,
    line: number,
  ): boolean {
    this.flush();
    this.loneArray.set(counts);
    const res = this.insertChecked.run(
      loc,
      start,
      counter,
      durationMs,
      volumeM3,
      this.loneCounts,
      flags,
      room,
      line,
    );
    return res.changes > 0;
  }

  /** The counts of the row written last by `addChecked` (for comparing with a stored duplicate). */
  get checkedCounts(): Buffer {
    return this.loneCounts;
  }

  /** The stored sample with this key (after a refused `addChecked`). */
  prior(loc: number, start: number, counter: number, durationMs: number): PriorSample | undefined {
    return this.existingStmt.get(loc, start, counter, durationMs) as PriorSample | undefined;
  }

  /** ORs `bit` into the flags of this import's samples of a series with start in [fromMs, toMs]. */
  orFlags(bit: number, loc: number, counter: number, fromMs: number, toMs: number): void {
    this.flush();
    this.orFlagsStmt.run(bit, loc, counter, fromMs, toMs, this.opts.importId);
  }

  /** ORs `bit` into the flags of this import's sample of a series starting at `start`. */
  orFlagsAt(bit: number, loc: number, counter: number, start: number): void {
    this.flush();
    this.orFlagsAtStmt.run(bit, loc, counter, start, this.opts.importId);
  }

  /** Writes the rows waiting in the batch (before any statement that must see them). */
  flush(): void {
    const n = this.pendingRows;
    if (n === 0) return;
    if (n === this.opts.batchRows) this.batch(n).run(this.pending);
    else {
      // A part batch: in statements of falling powers of two (a handful of prepared statements).
      let off = 0;
      let left = n;
      while (left > 0) {
        let size = 1;
        while (size * 2 <= left) size *= 2;
        this.batch(size).run(this.pending.slice(off * PER_ROW, (off + size) * PER_ROW));
        off += size;
        left -= size;
      }
    }
    this.pendingRows = 0;
  }

  private batch(rows: number): Statement {
    let s = this.batchStmts.get(rows);
    if (!s) {
      // No ON CONFLICT: a batched key is new by construction, so a conflict is a fault.
      s = this.db.prepare(
        `INSERT INTO counter_samples (${COLUMNS}) VALUES ${Array(rows).fill(this.rowSql).join(', ')}`,
      );
      this.batchStmts.set(rows, s);
    }
    return s;
  }
}

/** The row id of a channel layout in counter_channel_sets, added when it is new. */
export function channelSetId(
  db: Db,
  mode: 'cumulative' | 'differential',
  sizes: string,
  channels: number,
): number {
  db.prepare('INSERT OR IGNORE INTO counter_channel_sets (mode, sizes, channel_count) VALUES (?, ?, ?)').run(
    mode,
    sizes,
    channels,
  );
  return (
    db.prepare('SELECT id FROM counter_channel_sets WHERE mode = ? AND sizes = ?').get(mode, sizes) as {
      id: number;
    }
  ).id;
}
