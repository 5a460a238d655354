/**
 * The demo recovers its own truth (docs/demo.md "What learning recovers"): the monitor lot TRMON1
 * (two bare wafers per LACT-1 chamber, two sphere-seeded wafers per rinse) and the product wafers
 * between their two scans, learned by the product, give back the adders and removal curves the
 * generator used (scripts/demo/line.ts, imported here as the truth) within their 95 % intervals —
 * or say "too little data" where two wafers cannot carry a fit (LACT-1 chamber A at 0.5 per pass).
 * Also `voidcast learn` on the same data directory and the Tools & cleans page with the fits.
 *
 * Source of the expected values: the generator's parameters (TOOLS, CLEANS); the intervals are the
 * product's own. Each check is one 95 % interval, so the set as a whole is a demonstration on one
 * seeded scenario, not a coverage test (that is in the model's tests over 200 repetitions).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CLEANS, TOOLS } from '../../scripts/demo/line.ts';
import { loadDemo } from '../../src/cli/demo.ts';
import { main } from '../../src/cli/main.ts';
import { learnAdders, learnRemoval } from '../../src/engine/learn/index.ts';
import type { AddersReport, RemovalReport } from '../../src/engine/learn/types.ts';
import { type Db, openDataDir } from '../../src/store/db.ts';
import { createApp } from '../../src/web/app.ts';

/** The generator's adders per pass of a tool at size d (its power law; none below fromM). */
function truthAdders(toolId: string, chamber: string | null, dM: number): { count: number; slope: number } {
  const t = TOOLS.find((x) => x.id === toolId && x.chamber === chamber)!;
  const a = t.adders!;
  return { count: a.countAbove * (dM / a.atDiameterM) ** -a.slope, slope: a.slope };
}

describe('the demo recovers its truth', () => {
  let dir: string;
  let db: Db;
  let adders: AddersReport;
  let removal: RemovalReport;
  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'voidcast-demo-learn-'));
    db = openDataDir(dir);
    await loadDemo(db);
    adders = learnAdders(db);
    removal = learnRemoval(db);
  }, 180_000);
  afterAll(() => {
    db.close();
    rmSync(dir, { recursive: true, force: true });
  });

  const tool = (key: string) => adders.results.find((r) => r.toolKey === key)!;
  const clean = (id: string) => removal.results.find((r) => r.cleanId === id)!;

  it('LACT-1 chamber B: 25 per pass at 45 nm, slope 1.0 from 40 nm — inside the count and slope intervals', () => {
    const b = tool('LACT-1/B');
    const truth = truthAdders('LACT-1', 'B', b.referenceM!);
    expect(b.proposal).not.toBeNull();
    expect(b.passes.map((p) => p.waferId)).toEqual(['TRMON1-03', 'TRMON1-04']);
    expect(b.proposal!.countLow).toBeLessThanOrEqual(truth.count);
    expect(b.proposal!.countHigh).toBeGreaterThanOrEqual(truth.count);
    expect(b.fit!.slopeLow!).toBeLessThanOrEqual(truth.slope);
    expect(b.fit!.slopeHigh!).toBeGreaterThanOrEqual(truth.slope);
  });

  it('LACT-1 chamber A: two wafers at 0.5 per pass are too little data — said, nothing proposed, the count interval still holds the truth', () => {
    const a = tool('LACT-1/A');
    expect(a.proposal).toBeNull();
    expect(a.tooLittle).toMatch(
      /^too little data: \d adders? ≥ 60 nm over 2 passes \(the size slope needs at least 10\)/,
    );
    const truth = truthAdders('LACT-1', 'A', a.referenceM!);
    expect(a.fit!.lowerPerPass).toBeLessThanOrEqual(truth.count);
    expect(a.fit!.upperPerPass).toBeGreaterThanOrEqual(truth.count);
  });

  it('the stocker, learned from 125 product wafers between the post-clean and pre-bond scans, holds its truth', () => {
    const s = tool('ZSTK-1');
    expect(s.passes).toHaveLength(125);
    const truth = truthAdders('ZSTK-1', null, s.referenceM!);
    expect(s.proposal!.countLow).toBeLessThanOrEqual(truth.count);
    expect(s.proposal!.countHigh).toBeGreaterThanOrEqual(truth.count);
    expect(s.fit!.slopeLow!).toBeLessThanOrEqual(truth.slope);
    expect(s.fit!.slopeHigh!).toBeGreaterThanOrEqual(truth.slope);
  });

  it('CLN-RIN1 and CLN-RIN2: E_max, d50 and w of the generator inside the fitted intervals', () => {
    for (const id of ['CLN-RIN1', 'CLN-RIN2']) {
      const truth = CLEANS.find((c) => c.id === id)!;
      const r = clean(id);
      const f = r.fit!;
      expect(r.proposal).not.toBeNull();
      expect(f.maxEfficiencyFitted).toBe(true);
      expect(f.maxEfficiencyLow!).toBeLessThanOrEqual(truth.maxEfficiency);
      expect(f.maxEfficiencyHigh!).toBeGreaterThanOrEqual(truth.maxEfficiency);
      expect(f.d50LowM).toBeLessThanOrEqual(truth.halfSizeM);
      expect(f.d50HighM).toBeGreaterThanOrEqual(truth.halfSizeM);
      expect(f.widthLowDecades).toBeLessThanOrEqual(truth.widthDecades);
      expect(f.widthHighDecades).toBeGreaterThanOrEqual(truth.widthDecades);
      expect(r.ownAdders!.passes).toBe(2);
    }
  });

  it('the post-CMP clean has no scan before it: said, with the wafers', () => {
    const r = clean('CLN-PCMP');
    expect(r.passes).toHaveLength(0);
    expect(r.tooLittle).toMatch(/no pass through this clean/);
    expect(r.notes.join(' ')).toMatch(
      /125 wafers \(TR2641-01, TR2641-02, TR2641-03, …\) went through ZCLN-1 with a scan after it but no scan before/,
    );
  });

  it('voidcast learn prints the same fits; --json carries them; an unknown clean is "not found"', async () => {
    const out: string[] = [];
    const err: string[] = [];
    const io = {
      out: (t: string) => out.push(t),
      err: (t: string) => err.push(t),
      isTty: false,
      env: {},
      cwd: dir,
    };
    expect(await main(['learn', 'adders', '--data', dir], io)).toBe(0);
    const text = out.join('');
    expect(text).toContain('LACT-1/B — Levant plasma activation 1');
    expect(text).toMatch(/LACT-1\/A[\s\S]*too little data/);
    out.length = 0;
    expect(await main(['learn', 'removal', '--clean', 'CLN-RIN2', '--json', '--data', dir], io)).toBe(0);
    const json = JSON.parse(out.join('')) as RemovalReport;
    expect(json.results.map((r) => r.cleanId)).toEqual(['CLN-RIN2']);
    expect(json.results[0]!.proposal!.halfSizeM).toBeCloseTo(clean('CLN-RIN2').proposal!.halfSizeM, 15);
    expect(await main(['learn', 'removal', '--clean', 'NO-SUCH', '--data', dir], io)).toBe(4);
    expect(err.join('')).toContain('no clean "NO-SUCH"');
    expect(await main(['learn', 'nothing', '--data', dir], io)).toBe(2);
  });

  it('the Tools & cleans page shows the fits on request (GET form, htmx fragment)', async () => {
    const app = createApp({ db, dataDir: dir, version: 'test', log: () => {} });
    const plain = await (await app.request('/tools')).text();
    expect(plain).toContain('action="/tools#vc-learned"');
    expect(plain).not.toContain('data-learned-tool');
    const page = await (await app.request('/tools?learn=1')).text();
    const row = /<tr data-learned-tool="LACT-1\/B">([\s\S]*?)<\/tr>/.exec(page)![1]!;
    expect(row).toContain('proposed');
    expect(page).toMatch(/<figure class="vc-panel vc-learned-clean" data-learned-clean="CLN-RIN2">/);
    expect(page).toContain('class="vc-curve-band"');
    expect(page).toContain('data-chart="adder-history"');
    const frag = await app.request('/tools/learned', { headers: { 'HX-Request': 'true' } });
    expect(frag.status).toBe(200);
    expect((await frag.text()).startsWith('<section id="vc-learned"')).toBe(true);
    const noScript = await app.request('/tools/learned');
    expect(noScript.status).toBe(303);
    expect(noScript.headers.get('location')).toBe('/tools?learn=1#vc-learned');
  });
});
