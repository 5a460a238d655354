/**
 * Saved scenarios: save, list, load and export. The scenario is checked (parseScenario) before it is
 * stored, and its target must exist; a saved scenario is only ever applied to inputs in memory — it
 * never changes stored data or sign-offs. Store access: src/store/scenarios.ts.
 */
import type { Db } from '../../store/db.ts';
import { readLot } from '../../store/lots.ts';
import { readPair } from '../../store/pairs.ts';
import {
  insertScenario,
  readScenario,
  readScenarioByName,
  readScenarios,
  type StoredScenario,
} from '../../store/scenarios.ts';
import { parseScenario } from './scenario.ts';
import { type SavedScenario, type Scenario, ScenarioError } from './types.ts';

/** The export format's name and version (the JSON an export writes and an import could read). */
export const SCENARIO_EXPORT_FORMAT = 'voidcast-scenario/1';

function saved(s: StoredScenario): SavedScenario {
  return {
    id: s.id,
    name: s.name,
    target: s.target,
    scenario: parseScenario(s.scenario),
    createdBy: s.createdBy,
    createdAtMs: s.createdAtMs,
  };
}

/** Saves a scenario under a name. Throws ScenarioError for a bad scenario, name or target. */
export function saveScenario(
  db: Db,
  req: {
    name: string;
    scenario: Scenario;
    target: { kind: 'pair' | 'lot'; id: string } | null;
    createdBy: string;
    nowMs?: number;
  },
): SavedScenario {
  const name = req.name.trim();
  if (!name || name.length > 200) throw new ScenarioError('a scenario name is 1 to 200 characters');
  if (!req.createdBy.trim()) throw new ScenarioError('a saved scenario names who saved it');
  const scenario = parseScenario({ ...req.scenario, name });
  if (req.target?.kind === 'pair' && !readPair(db, req.target.id))
    throw new ScenarioError(`there is no pair ${req.target.id} to save the scenario for`);
  if (req.target?.kind === 'lot' && !readLot(db, req.target.id))
    throw new ScenarioError(`there is no lot ${req.target.id} to save the scenario for`);
  const id = insertScenario(db, {
    name,
    scenario,
    target: req.target,
    createdBy: req.createdBy,
    createdAtMs: req.nowMs ?? Date.now(),
  });
  return saved(readScenario(db, id)!);
}

/** Saved scenarios, newest first (optionally those made for one pair or lot). */
export function listScenarios(db: Db, target?: { kind: 'pair' | 'lot'; id: string }): SavedScenario[] {
  return readScenarios(db, target).map(saved);
}

/** A saved scenario by id (a whole number) or by name (its latest save), or null. */
export function loadScenario(db: Db, idOrName: number | string): SavedScenario | null {
  const s = typeof idOrName === 'number' ? readScenario(db, idOrName) : readScenarioByName(db, idOrName);
  return s ? saved(s) : null;
}

/** A saved scenario as the export JSON: the format, the scenario, its target, who and when. */
export function exportScenario(s: SavedScenario): {
  format: string;
  id: number;
  name: string;
  target: SavedScenario['target'];
  createdBy: string;
  createdAt: string;
  scenario: Scenario;
} {
  return {
    format: SCENARIO_EXPORT_FORMAT,
    id: s.id,
    name: s.name,
    target: s.target,
    createdBy: s.createdBy,
    createdAt: new Date(s.createdAtMs).toISOString(),
    scenario: s.scenario,
  };
}
