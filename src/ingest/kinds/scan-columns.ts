/**
 * The columns and metadata entries of the `scans` import kind (docs/formats.md "Surface scans"):
 * what a scans file may carry, each with its cell rule. src/ingest/kinds/scans.ts reads the file.
 */
import { DEFECT_CLASSES } from '../../store/scans.ts';
import { enumCell, numberCell, textCell, timeCell } from '../cells.ts';
import type { ColumnSpec, MetadataSpec } from '../types.ts';

const text = () => textCell();
const signedMm = (unit: string) => () => numberCell({ unit });
const positive = (unit: string) => () => numberCell({ min: 0, minExclusive: true, unit });

export const SCAN_LEVEL_FIELDS = [
  'scan_id',
  'lot',
  'wafer',
  'step',
  'tool',
  'chamber',
  'recipe',
  'film',
] as const;

export const SCAN_COLUMNS: readonly ColumnSpec[] = [
  {
    name: 'record',
    required: false,
    unit: null,
    description:
      'record layout only: `scan` (a scan header row) or `defect` (one defect of the scan named by scan_id)',
    cell: () => enumCell(['scan', 'defect'] as const),
  },
  {
    name: 'scan_id',
    required: false,
    unit: null,
    description: 'record layout: the scan a row belongs to',
    cell: text,
  },
  { name: 'lot', required: false, unit: null, description: 'scan rows: lot id', cell: text },
  { name: 'wafer', required: false, unit: null, description: 'scan rows: wafer id', cell: text },
  {
    name: 'step',
    required: false,
    unit: null,
    description: 'scan rows: route step the scan follows',
    cell: text,
  },
  { name: 'tool', required: false, unit: null, description: 'scan rows: inspection tool id', cell: text },
  {
    name: 'chamber',
    required: false,
    unit: null,
    description: 'scan rows: inspection tool chamber or stage',
    cell: text,
  },
  { name: 'recipe', required: false, unit: null, description: 'scan rows: inspection recipe', cell: text },
  { name: 'film', required: false, unit: null, description: 'scan rows: top film of the wafer', cell: text },
  {
    name: 'scan_time',
    required: false,
    unit: null,
    description: 'scan rows: time of the scan, ISO 8601 with offset',
    cell: (c) => timeCell(c.zone),
  },
  {
    name: 'threshold_nm',
    required: false,
    unit: 'nm',
    description: 'scan rows: detection threshold, LSE diameter',
    cell: positive('nm'),
  },
  {
    name: 'x_mm',
    required: false,
    unit: 'mm',
    group: 'x',
    description: 'defect x in the file’s convention (x_um: in µm)',
    cell: signedMm('mm'),
  },
  {
    name: 'x_um',
    required: false,
    unit: 'µm',
    group: 'x',
    description: 'defect x in µm',
    cell: signedMm('µm'),
  },
  {
    name: 'y_mm',
    required: false,
    unit: 'mm',
    group: 'y',
    description: 'defect y in the file’s convention (y_um: in µm)',
    cell: signedMm('mm'),
  },
  {
    name: 'y_um',
    required: false,
    unit: 'µm',
    group: 'y',
    description: 'defect y in µm',
    cell: signedMm('µm'),
  },
  {
    name: 'size_nm',
    required: false,
    unit: 'nm',
    group: 'size',
    description: 'defect size, LSE diameter (size_um: in µm)',
    cell: positive('nm'),
  },
  {
    name: 'size_um',
    required: false,
    unit: 'µm',
    group: 'size',
    description: 'defect size in µm',
    cell: positive('µm'),
  },
  {
    name: 'class',
    required: false,
    unit: null,
    description: `defect class: ${DEFECT_CLASSES.join(', ')} (empty: unknown, flagged)`,
    cell: () => enumCell(DEFECT_CLASSES),
  },
];

export const SCAN_METADATA: readonly MetadataSpec[] = [
  {
    key: 'scan_id',
    description: 'one-scan layout: the scan id (default: wafer@scan_time)',
    example: 'SC-2403-0117',
  },
  {
    key: 'lot',
    description: 'one-scan layout: lot id (record layout: a default for scan rows)',
    example: 'L2403',
  },
  { key: 'wafer', description: 'one-scan layout: wafer id', example: 'L2403-07' },
  { key: 'step', description: 'route step the scan follows', example: 'post-CMP inspection' },
  { key: 'tool', description: 'inspection tool id', example: 'SSI-1' },
  { key: 'chamber', description: 'inspection tool chamber or stage', example: 'stage-A' },
  { key: 'recipe', description: 'inspection recipe', example: 'OX45-HS' },
  { key: 'film', description: 'top film of the wafer', example: 'SiCN' },
  {
    key: 'scan_time',
    description: 'one-scan layout: time of the scan, ISO 8601 with offset',
    example: '2026-03-02T08:15:00+01:00',
  },
  { key: 'threshold_nm', description: 'detection threshold, LSE diameter in nm', example: '45' },
  { key: 'wafer_diameter_mm', description: 'wafer diameter in mm', example: '300' },
  { key: 'edge_exclusion_mm', description: 'edge exclusion of the scan in mm', example: '3' },
  {
    key: 'coordinates',
    description: 'coordinate convention: origin=centre|lower-left x=right|left y=up|down view=front|back',
    example: 'origin=centre x=right y=up view=front',
  },
  {
    key: 'notch_deg',
    description: 'notch angle in the file’s axes, degrees counter-clockwise from +x',
    example: '270',
  },
];
