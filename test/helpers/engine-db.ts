/**
 * Writes engine inputs (built in code, see engine-inputs.ts) into the real tables of a migrated
 * database by direct inserts, for the engine's integration tests and the bench. Invented data only.
 */
import { createHash } from 'node:crypto';
import type { LineData, PairInput, WaferInput } from '../../src/engine/types.ts';
import type { Db } from '../../src/store/db.ts';
import { packFloat64, packUint8 } from '../../src/store/scans.ts';

function sha(s: string): string {
  return createHash('sha256').update(s).digest('hex');
}

/** Inserts one bookkeeping row in `imports` (every stored row names its import); returns its id. */
export function fakeImport(db: Db, kind: string, name: string): number {
  const info = db
    .prepare(
      `INSERT INTO imports (kind, file_name, sha256, status, bytes, rows_read, rows_stored, rows_rejected, duplicates,
         dialect, metadata, notes, issues, imported_at)
       VALUES (?, ?, ?, 'imported', 0, 0, 0, 0, 0, '{}', '{}', '[]', '[]', ?)`,
    )
    .run(kind, name, sha(`${kind}:${name}:${Math.random()}`), new Date(0).toISOString());
  return Number(info.lastInsertRowid);
}

export function seedLine(db: Db, line: LineData): void {
  const imp = fakeImport(db, 'seed', 'line');
  const insLoc = db.prepare(
    `INSERT INTO locations (location_id, parent_id, level, name, environment, iso_class, floor_area_m2, exposed_states,
       air_velocity_m_s, import_id) VALUES (?, NULL, 'bay', ?, ?, ?, NULL, '', ?, ?)`,
  );
  const insLev = db.prepare(
    'INSERT INTO location_levels (location_id, diameter_m, alert_per_m3, action_per_m3) VALUES (?, ?, ?, ?)',
  );
  for (const l of Object.values(line.locations)) {
    insLoc.run(l.locationId, l.name, l.environment, l.isoClass, l.airVelocityMps, imp);
    if (l.levels) insLev.run(l.locationId, l.levels.atDiameterM, l.levels.alertPerM3, l.levels.actionPerM3);
  }
  const insProd = db.prepare(
    `INSERT INTO products (id, name, spec_version, bonding_mode, wafer_diameter_m, edge_exclusion_m, content_sha256,
       definition_json, source_json, import_id) VALUES (?, ?, ?, 'wafer-to-wafer', ?, ?, ?, ?, '{}', ?)`,
  );
  for (const p of Object.values(line.products)) {
    const j = JSON.stringify(p);
    insProd.run(p.productId, p.name, p.spec.version, p.waferDiameterM, p.edgeExclusionM, sha(j), j, imp);
  }
  const insTool = db.prepare(
    `INSERT INTO tools (tool_id, chamber, name, tool_kind, adders_json, adder_uncertainty_factor, import_id)
     VALUES (?, ?, ?, 'process', ?, ?, ?)`,
  );
  for (const t of Object.values(line.tools)) {
    const adders = t.adders
      ? { model: 'power-law', ...t.adders }
      : t.adderBands?.length
        ? { model: 'bands', bands: t.adderBands }
        : null;
    insTool.run(
      t.toolId,
      t.chamber ?? '',
      t.name,
      adders ? JSON.stringify(adders) : null,
      t.adderUncertaintyFactor,
      imp,
    );
  }
  const insClean = db.prepare(
    `INSERT INTO cleans (id, name, tool_id, chamber, recipe, curve, max_efficiency, half_size_m, width_decades, bands_json, import_id)
     VALUES (?, ?, ?, NULL, NULL, 'logistic-log-d', ?, ?, ?, NULL, ?)`,
  );
  for (const c of Object.values(line.cleans))
    insClean.run(c.cleanId, c.name, c.toolId, c.maxEfficiency, c.halfSizeM, c.widthDecades, imp);

  // Counter samples: one counter, one cumulative channel set per distinct channel layout.
  const counterId = Number(
    db.prepare("INSERT INTO counters (counter_id) VALUES ('CTR-1')").run().lastInsertRowid,
  );
  const insSet = db.prepare(
    'INSERT OR IGNORE INTO counter_channel_sets (mode, sizes, channel_count) VALUES (?, ?, ?)',
  );
  const getSet = db.prepare('SELECT id FROM counter_channel_sets WHERE mode = ? AND sizes = ?').pluck();
  const locRow = db.prepare('SELECT id FROM locations WHERE location_id = ?').pluck();
  const insSample = db.prepare(
    `INSERT INTO counter_samples (location, start_ms, counter, duration_ms, volume_m3, channel_set, counts, flags, room_state, import_id, line)
     VALUES (?, ?, ?, ?, ?, ?, ?, ?, 3, ?, ?)`,
  );
  for (const s of Object.values(line.counters)) {
    const sizes = JSON.stringify(Array.from(s.channelSizesM, (d) => [d, null]));
    insSet.run('cumulative', sizes, s.channelSizesM.length);
    const setId = getSet.get('cumulative', sizes) as number;
    const loc = locRow.get(s.locationId) as number;
    const k = s.channelSizesM.length;
    const volume = 0.0283168; // 1 ft³ sampled per minute
    for (let i = 0; i < s.startMs.length; i++) {
      const counts = new Float64Array(k);
      for (let c = 0; c < k; c++) counts[c] = s.cumulativePerM3[i * k + c]! * volume;
      insSample.run(
        loc,
        s.startMs[i]!,
        counterId,
        s.endMs[i]! - s.startMs[i]!,
        volume,
        setId,
        packFloat64(counts),
        s.flags[i]!,
        imp,
        i + 1,
      );
    }
  }
}

function seedWafer(db: Db, w: WaferInput, imp: number): void {
  db.prepare('INSERT OR IGNORE INTO lots (id, product_id, created_import_id) VALUES (?, NULL, ?)').run(
    w.lotId,
    imp,
  );
  db.prepare('INSERT INTO wafers (id, lot_id, created_import_id) VALUES (?, ?, ?)').run(
    w.waferId,
    w.lotId,
    imp,
  );
  const s = w.latestScan;
  if (s) {
    const n = s.particles.count;
    db.prepare(
      `INSERT INTO scans (scan_key, wafer_id, step, tool_id, chamber, recipe, film, time_ms, time_text, wafer_diameter_m,
         edge_exclusion_m, threshold_m, convention, defect_count, x_m, y_m, diameter_m, class_codes, content_sha256, import_id, line)
       VALUES (?, ?, 'pre-bond scan', ?, NULL, ?, NULL, ?, ?, 0.3, ?, ?, 'origin=centre x=right y=up view=front notch=270', ?, ?, ?, ?, ?, ?, ?, 1)`,
    ).run(
      s.scanId,
      w.waferId,
      s.toolId,
      s.recipe,
      s.timeMs,
      new Date(s.timeMs).toISOString(),
      s.edgeExclusionM,
      s.thresholdM,
      n,
      packFloat64(s.particles.xM),
      packFloat64(s.particles.yM),
      packFloat64(s.particles.diameterM),
      packUint8(new Uint8Array(n)), // class 0: particle
      sha(`${s.scanId}:${n}`),
      imp,
    );
  }
  const ins = db.prepare(
    `INSERT INTO ledger_steps (lot_id, wafer_id, step, kind, tool_id, chamber, recipe, clean_id, location_id, carrier, orientation,
       start_ms, end_ms, reclean_count, import_id, line) VALUES (?, ?, ?, ?, ?, ?, NULL, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  );
  w.ledger.forEach((st, i) => {
    ins.run(
      w.lotId,
      w.waferId,
      st.step,
      st.kind,
      st.toolId,
      st.chamber,
      st.cleanId,
      st.locationId,
      st.carrier,
      st.orientation,
      st.startMs,
      st.endMs,
      w.recleanCount,
      imp,
      i + 1,
    );
  });
}

export function seedPairs(db: Db, pairs: PairInput[]): void {
  const imp = fakeImport(db, 'seed', 'pairs');
  db.transaction(() => {
    for (const p of pairs) {
      seedWafer(db, p.top, imp);
      seedWafer(db, p.bottom, imp);
      db.prepare('UPDATE lots SET product_id = ? WHERE id = ?').run(p.productId, p.lotId);
      db.prepare(
        `INSERT INTO pairs (id, product_id, lot_id, top_wafer_id, bottom_wafer_id, flip_axis, rotation_rad, offset_x_m, offset_y_m,
           bonder_tool_id, planned_bond_ms, import_id, line) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, 1)`,
      ).run(
        p.pairId,
        p.productId,
        p.lotId,
        p.top.waferId,
        p.bottom.waferId,
        p.flipAxis,
        p.rotationRad,
        p.offsetXM,
        p.offsetYM,
        p.bonderToolId,
        p.bondTimeMs,
        imp,
      );
    }
  })();
}
