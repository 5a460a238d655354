/**
 * The contamination audit's public API, for the web pages, the report and the CLI:
 *
 *   auditAreaFromDb(db, areaId, opts)             → AreaAudit (classification, levels, excursions, costs, charts)
 *   keptAreaAudit(db, areaId, opts)               → the same, kept until the data change (the pages)
 *   classifyAreaFromDb(db, areaId, opts)          → AreaClassification
 *   findExcursionsInDb(db, areaId, opts)          → Excursion[] (with acknowledgements)
 *   groupEvents(excursions)                       → ExcursionEvent[] (overlapping excursions at a shared location)
 *   eventCostInDb(db, event, opts)                → EventCost (cached; excursionCostInDb: one excursion's own)
 *   acknowledgeExcursion(db, id, comment, account, nowMs) → ExcursionAck
 *   loadCurrentLevels / loadLevelHistory / deriveAndStoreLevels (levels in force, history, derive)
 *   loadAreaMembers(db, areaId)                   → the area and its sampling locations
 *   lineParetoFromDb / chamberHistoryFromDb / searchLine (the line view)
 *   auditTables(audit) (../export/audit-tables.ts) and toCsv (../export/csv.ts) for the downloads
 *
 * Errors: AuditInputError (kind 'not-found' → 404, 'bad-input' → 400). Types: ./types.ts.
 */
export { type AuditOptions, auditAreaFromDb, chartsOf, keptAreaAudit } from './audit.ts';
export { controlChart } from './charts.ts';
export { OCCUPANCY_STATES, roomStateCodes } from './common.ts';
export { eventCostInDb, excursionCostInDb } from './cost-loader.ts';
export { AuditInputError } from './errors.ts';
export { groupEvents } from './events.ts';
export { checkRules, DEFAULT_RULES, findExcursions } from './excursions.ts';
export { type DerivedMethod, deriveLevels, LEVEL_DEFAULTS, LEVEL_METHODS } from './levels.ts';
export { chamberHistoryFromDb, type LinePareto, lineParetoFromDb, searchLine } from './line-view.ts';
export {
  acknowledgeExcursion,
  classifyAreaFromDb,
  deriveAndStoreLevels,
  findExcursionsInDb,
  loadAreaMembers,
  loadCurrentLevels,
  loadLevelHistory,
} from './loader.ts';
export type * from './types.ts';
