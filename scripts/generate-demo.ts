/**
 * `npm run demo:generate [-- --out DIR]`: regenerates the demo data set (default: sample-counts/).
 *
 * The scenario and its truth live in scripts/demo/ (see docs/demo.md). The output is deterministic:
 * running this again writes identical bytes.
 */
import { resolve } from 'node:path';
import { parseArgs } from 'node:util';
import { writeDemo } from './demo/index.ts';

const { values } = parseArgs({ options: { out: { type: 'string' } }, strict: true });
const out = resolve(values.out ?? 'sample-counts');
const t0 = Date.now();
const manifest = writeDemo(out);
process.stdout.write(
  `wrote ${manifest.files.length} files to ${out} (as of ${manifest.asOf}) in ${((Date.now() - t0) / 1000).toFixed(1)} s\n`,
);
