/**
 * Import kind `locations`: one CSV row per location of the hierarchy site > area > bay > tool > point,
 * with the air it holds (environment type, target ISO 14644-1 class, classified floor area, which
 * wafer states are open to it, downflow velocity) and optional alert/action levels per size.
 *
 * A row describes its location completely: importing a location that is already stored replaces
 * its attributes and its levels (its key, and so the counter samples recorded there, stay).
 * Parents may come later in the same file or be stored already; a child must sit strictly deeper in
 * the hierarchy than its parent (which also rules out cycles).
 */
import { z } from 'zod';
import { CELL_FAIL, enumCell, enumListCell, idCell, numberCell, textCell } from '../cells.ts';
import type { Cell, ColumnSpec, ImportKind, KindIssue, KindSession, PatternColumnSpec } from '../types.ts';
import { CONCENTRATION_UNITS, findUnit, parseSize, toSi } from '../units.ts';

export const LOCATION_LEVELS = ['site', 'area', 'bay', 'tool', 'point'] as const;
export type LocationLevel = (typeof LOCATION_LEVELS)[number];

/** Environment types (practice of wafer fabs; EFEM = equipment front-end module). */
export const ENVIRONMENT_TYPES = [
  'open-room',
  'mini-environment',
  'efem',
  'load-port',
  'purged-carrier',
  'process-module',
] as const;
export type EnvironmentType = (typeof ENVIRONMENT_TYPES)[number];

/** Wafer states that can be open to a location's air. */
export const EXPOSED_STATES = ['post-cmp', 'cleaned', 'activated', 'bonded'] as const;

/**
 * ISO 14644-1:2015 §3.2 / Table 1: class number N from 1 to 9; intermediate classes in increments
 * of 0.1 (§4.1 note). A class is written as N, e.g. 4 or 4.5.
 */
export function isoClassCell(): Cell<number> {
  const rule = 'must be an ISO 14644-1 class from 1 to 9 in steps of 0.1 (e.g. 4 or 4.5)';
  const ok = (v: number) =>
    Number.isFinite(v) && v >= 1 && v <= 9 && Math.abs(v * 10 - Math.round(v * 10)) < 1e-9;
  const base = numberCell({ min: 1, max: 9 });
  return {
    numeric: true,
    schema: z
      .string()
      .regex(/^[+-]?(?:\d+(?:\.\d*)?|\.\d+)$/, { error: rule })
      .transform(Number)
      .refine(ok, { error: rule }),
    fast: (s) => {
      const v = base.fast!(s);
      if (v === CELL_FAIL || /[eE]/.test(s) || !ok(v)) return CELL_FAIL;
      return v;
    },
  };
}

export const LOCATION_COLUMNS: readonly ColumnSpec[] = [
  {
    name: 'location_id',
    required: true,
    unit: null,
    description: 'identifier used by other files',
    cell: idCell,
  },
  {
    name: 'parent_id',
    required: false,
    unit: null,
    description: 'the location this one sits in (empty for a site)',
    cell: idCell,
  },
  {
    name: 'level',
    required: true,
    unit: null,
    description: `place in the hierarchy: ${LOCATION_LEVELS.join(', ')}`,
    cell: () => enumCell(LOCATION_LEVELS),
  },
  {
    name: 'name',
    required: false,
    unit: null,
    description: 'display name (default: the id)',
    cell: () => textCell(),
  },
  {
    name: 'environment',
    required: true,
    unit: null,
    description: `environment type: ${ENVIRONMENT_TYPES.join(', ')}`,
    cell: () => enumCell(ENVIRONMENT_TYPES),
  },
  {
    name: 'iso_class',
    required: false,
    unit: null,
    description: 'target ISO 14644-1 class N, 1 to 9 in steps of 0.1 (empty: not classified)',
    cell: isoClassCell,
  },
  {
    name: 'floor_area_m2',
    required: false,
    unit: 'm²',
    description: 'floor area of the classified room, for the number of sampling locations',
    cell: () => numberCell({ min: 0, minExclusive: true, unit: 'm²' }),
  },
  {
    name: 'exposed_states',
    required: false,
    unit: null,
    description: `wafer states open to this air, separated by | (${EXPOSED_STATES.join(', ')}) or none`,
    cell: () => enumListCell(EXPOSED_STATES),
  },
  {
    name: 'air_velocity_m_s',
    required: false,
    unit: 'm/s',
    description: 'downflow air velocity over a horizontal wafer (empty: the engine default)',
    cell: () => numberCell({ min: 0, minExclusive: true, max: 10, unit: 'm/s' }),
  },
];

export interface LevelColumn {
  which: 'alert' | 'action';
  diameterM: number;
  sizeShown: string;
  /** Multiplier to particles per m³. */
  unit: { name: string; shown: string; divide: number; multiply: number };
}

const LEVEL_HEADER = /^(alert|action)_ge_(\d+(?:\.\d+)?(?:um|µm|nm))_(per_m3|per_l|per_ft3)$/;

export const LOCATION_LEVEL_COLUMNS: PatternColumnSpec = {
  pattern: '{alert|action}_ge_<size><um|nm>_{per_m3|per_L|per_ft3}',
  description:
    'alert or action level: particles at or above the size per volume of air, e.g. alert_ge_0.5um_per_m3',
  unit: 'per m³, per L or per ft³ (in the header)',
  match: (key): LevelColumn | null => {
    const m = LEVEL_HEADER.exec(key);
    if (!m) return null;
    const size = parseSize(m[2]!);
    const unit = findUnit(CONCENTRATION_UNITS, m[3]!);
    if (!size || !unit) return null;
    return { which: m[1] as 'alert' | 'action', diameterM: size.m, sizeShown: size.shown, unit };
  },
  cell: () => numberCell({ min: 0 }),
};

const RANK: Record<LocationLevel, number> = { site: 0, area: 1, bay: 2, tool: 3, point: 4 };

export const locations: ImportKind = {
  name: 'locations',
  summary: 'the location hierarchy with environment type, ISO class, area and alert/action levels',
  columns: LOCATION_COLUMNS,
  patternColumns: [LOCATION_LEVEL_COLUMNS],
  metadata: [],
  begin(ctx): KindSession | KindIssue[] {
    const { db } = ctx;
    const levelCols = ctx.header
      .filter((h) => h.pattern?.spec === LOCATION_LEVEL_COLUMNS)
      .map((h) => ({ key: h.key, written: h.written, d: h.pattern!.descriptor as LevelColumn }));
    const seenLevel = new Map<string, string>();
    const issues: KindIssue[] = [];
    for (const c of levelCols) {
      const k = `${c.d.which}@${c.d.diameterM}`;
      const prior = seenLevel.get(k);
      if (prior)
        issues.push({
          line: ctx.headerLine,
          column: c.written,
          value: c.written,
          rule: `gives the ${c.d.which} level at ${c.d.sizeShown} a second time (also "${prior}")`,
        });
      seenLevel.set(k, c.written);
    }
    if (issues.length) return issues;

    const existing = db.prepare('SELECT * FROM locations WHERE location_id = ?');
    const upsert = db.prepare(
      `INSERT INTO locations (location_id, parent_id, level, name, environment, iso_class, floor_area_m2,
         exposed_states, air_velocity_m_s, import_id)
       VALUES (@location_id, @parent_id, @level, @name, @environment, @iso_class, @floor_area_m2, @exposed_states,
         @air_velocity_m_s, @import_id)
       ON CONFLICT (location_id) DO UPDATE SET parent_id = excluded.parent_id, level = excluded.level,
         name = excluded.name, environment = excluded.environment, iso_class = excluded.iso_class,
         floor_area_m2 = excluded.floor_area_m2, exposed_states = excluded.exposed_states,
         air_velocity_m_s = excluded.air_velocity_m_s, import_id = excluded.import_id`,
    );
    const levelsOf = db.prepare(
      'SELECT diameter_m, alert_per_m3, action_per_m3 FROM location_levels WHERE location_id = ? ORDER BY diameter_m',
    );
    const dropLevels = db.prepare('DELETE FROM location_levels WHERE location_id = ?');
    const addLevel = db.prepare(
      'INSERT INTO location_levels (location_id, diameter_m, alert_per_m3, action_per_m3) VALUES (?, ?, ?, ?)',
    );
    const lineOf = new Map<string, number>();
    let updated = 0;

    return {
      row(row, line) {
        const id = row.location_id as string;
        const first = lineOf.get(id);
        if (first !== undefined) {
          return [
            {
              line,
              column: 'location_id',
              value: id,
              rule: `location "${id}" is given twice (first on line ${first})`,
            },
          ];
        }
        const levels = new Map<number, { alert: number | null; action: number | null }>();
        for (const c of levelCols) {
          const v = row[c.key] as number | undefined;
          if (v === undefined) continue;
          const e = levels.get(c.d.diameterM) ?? { alert: null, action: null };
          e[c.d.which] = toSi(v, c.d.unit);
          levels.set(c.d.diameterM, e);
        }
        const rowIssues: KindIssue[] = [];
        for (const [d, e] of levels) {
          if (e.alert !== null && e.action !== null && e.alert > e.action) {
            const col = levelCols.find((c) => c.d.which === 'alert' && c.d.diameterM === d)!;
            rowIssues.push({
              line,
              column: col.written,
              value: String(row[col.key]),
              rule: `the alert level must not exceed the action level at ${col.d.sizeShown}`,
            });
          }
        }
        if (rowIssues.length) return rowIssues;
        lineOf.set(id, line);
        const rec = {
          location_id: id,
          parent_id: (row.parent_id as string | undefined) ?? null,
          level: row.level as string,
          name: (row.name as string | undefined) ?? id,
          environment: row.environment as string,
          iso_class: (row.iso_class as number | undefined) ?? null,
          floor_area_m2: (row.floor_area_m2 as number | undefined) ?? null,
          exposed_states: ((row.exposed_states as string[] | undefined) ?? []).join('|'),
          air_velocity_m_s: (row.air_velocity_m_s as number | undefined) ?? null,
          import_id: ctx.importId,
        };
        const before = existing.get(id) as Record<string, unknown> | undefined;
        const beforeLevels = before ? JSON.stringify(levelsOf.all(id)) : '';
        upsert.run(rec);
        dropLevels.run(id);
        for (const [d, e] of [...levels].sort((a, b) => a[0] - b[0])) addLevel.run(id, d, e.alert, e.action);
        if (before) {
          const changed =
            (Object.keys(rec) as (keyof typeof rec)[]).some(
              (k) => k !== 'import_id' && before[k] !== rec[k],
            ) || JSON.stringify(levelsOf.all(id)) !== beforeLevels;
          if (changed) updated++;
        }
        return 'stored';
      },
      finish() {
        const issues: KindIssue[] = [];
        // Parents: stored or given in this file.
        const missing = db
          .prepare(
            `SELECT c.location_id AS id, c.parent_id AS parent FROM locations c
             LEFT JOIN locations p ON p.location_id = c.parent_id
             WHERE c.parent_id IS NOT NULL AND p.location_id IS NULL AND c.import_id = ?`,
          )
          .all(ctx.importId) as { id: string; parent: string }[];
        for (const m of missing) {
          issues.push({
            line: lineOf.get(m.id) ?? 0,
            column: 'parent_id',
            value: m.parent,
            rule: `parent location "${m.parent}" is neither in this file nor stored`,
          });
        }
        // Order: a child sits strictly deeper than its parent (so there are no cycles either).
        const pairs = db
          .prepare(
            `SELECT c.location_id AS id, c.level AS level, p.location_id AS pid, p.level AS plevel FROM locations c
             JOIN locations p ON p.location_id = c.parent_id
             WHERE c.import_id = ? OR p.import_id = ?`,
          )
          .all(ctx.importId, ctx.importId) as {
          id: string;
          level: LocationLevel;
          pid: string;
          plevel: LocationLevel;
        }[];
        for (const p of pairs) {
          if (RANK[p.level] > RANK[p.plevel]) continue;
          const childHere = lineOf.has(p.id);
          issues.push({
            line: lineOf.get(childHere ? p.id : p.pid) ?? 0,
            column: childHere ? 'parent_id' : 'level',
            value: childHere ? p.pid : p.plevel,
            rule: `a ${p.level} cannot sit in a ${p.plevel} ("${p.id}" in "${p.pid}"): the order is ${LOCATION_LEVELS.join(' > ')}`,
          });
        }
        issues.sort((a, b) => a.line - b.line);
        return { issues, updated };
      },
    };
  },
};
