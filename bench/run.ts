/**
 * `npm run bench`: runs every benchmark in bench/ in turn (each prints its own figures, measured
 * against a baseline in the same run). Pass names to run only some: `npm run bench -- import`.
 */
import { run as assessBench } from './assess.ts';
import { run as calibrateBench } from './calibrate.ts';
import { run as importBench } from './import.ts';
import { run as matchBench } from './match.ts';
import { run as scansReadBench } from './scans-read.ts';

const BENCHES: { name: string; run: () => Promise<void> }[] = [
  { name: 'import', run: importBench },
  { name: 'assess', run: assessBench },
  { name: 'scans-read', run: scansReadBench },
  { name: 'match', run: matchBench },
  { name: 'calibrate', run: calibrateBench },
];

const only = process.argv.slice(2).filter((a) => !a.startsWith('-'));
for (const b of BENCHES) {
  if (only.length > 0 && !only.includes(b.name)) continue;
  console.log(`— bench ${b.name} —`);
  await b.run();
}
