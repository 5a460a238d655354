import { describe, expect, it } from 'vitest';
import type { CliIo } from '../../src/cli/io.ts';
import { main } from '../../src/cli/main.ts';
import { CALCULATORS } from '../../src/engine/calculators.ts';
import { migrate, openDatabase } from '../../src/store/db.ts';
import { createApp } from '../../src/web/app.ts';

function cli() {
  let out = '';
  let err = '';
  const io: CliIo = { out: (t) => (out += t), err: (t) => (err += t), isTty: false, env: {}, cwd: '/tmp' };
  return { io, out: () => out, err: () => err };
}

async function calcJson(args: string[]) {
  const t = cli();
  const code = await main(['calc', ...args, '--json'], t.io);
  expect(code, t.err()).toBe(0);
  return JSON.parse(t.out()) as { outputs: { label: string; value: number | string }[]; source: string };
}

function app() {
  const db = openDatabase(':memory:');
  migrate(db);
  return createApp({ db, dataDir: '/tmp', version: 'test', log: () => {} });
}

describe('voidcast calc', () => {
  it('lists the calculators the issue asks for', () => {
    const ids = CALCULATORS.map((c) => c.id);
    for (const id of [
      'class-limit',
      'sample-volume',
      'locations',
      'deposition-velocity',
      'void-radius',
      'die-yield',
    ])
      expect(ids).toContain(id);
  });

  it('class-limit: ISO 5 at 0.5 µm is 3516.76 /m³ unrounded and 3520 in Table 1 (ISO 14644-1:2015 Table 1)', async () => {
    const r = await calcJson(['class-limit', '--class', '5', '--size', '0.5']);
    expect(r.outputs[0]!.value).toBeCloseTo(3516.76, 2);
    expect(r.outputs[2]!.value).toBe(3520);
    expect(r.source).toContain('ISO 14644-1:2015');
  });

  it('class-limit: ISO 7 at 0.1 µm is a blank cell, "not applicable" (ISO 14644-1:2015 Table 1 note c)', async () => {
    const r = await calcJson(['class-limit', '--class', '7', '--size', '0.1']);
    expect(r.outputs[2]!.value).toBe(
      'blank — not applicable: the particle concentration is very high (Table 1 note c)',
    );
  });

  it('class-limit: every Table 1 cell typed as the decimals a person writes (ISO 14644-1:2015 Table 1; rows 3, 5, 7 [V], others from memory [M])', async () => {
    // Printed values; null = blank cell (c: not applicable; d, e: classification inappropriate).
    const table: Record<number, (number | null)[]> = {
      1: [10, null, null, null, null, null],
      2: [100, 24, 10, null, null, null],
      3: [1000, 237, 102, 35, null, null],
      4: [10000, 2370, 1020, 352, 83, null],
      5: [100000, 23700, 10200, 3520, 832, null],
      6: [1000000, 237000, 102000, 35200, 8320, 293],
      7: [null, null, null, 352000, 83200, 2930],
      8: [null, null, null, 3520000, 832000, 29300],
      9: [null, null, null, 35200000, 8320000, 293000],
    };
    const sizes = ['0.1', '0.2', '0.3', '0.5', '1', '5'];
    for (let n = 1; n <= 9; n++)
      for (const [j, size] of sizes.entries()) {
        // the same size written three ways: plain, with trailing zeros, in exponent form
        for (const typed of [size, `${size}${size.includes('.') ? '' : '.'}00`, `${Number(size) * 10}e-1`]) {
          const r = await calcJson(['class-limit', '--class', String(n), '--size', typed]);
          const want = table[n]![j]!;
          if (want === null)
            expect(r.outputs[2]!.value, `class ${n} at ${typed} µm`).toMatch(
              /^blank — (not applicable|classification inappropriate)/,
            );
          else expect(r.outputs[2]!.value, `class ${n} at ${typed} µm`).toBe(want);
        }
      }
    // Between the columns and for fractional classes Table 1 has no entry: the formula applies.
    expect((await calcJson(['class-limit', '--class', '5', '--size', '0.4'])).outputs[2]!.value).toMatch(
      /^none: Table 1 lists 0\.1, 0\.2/,
    );
    expect((await calcJson(['class-limit', '--class', '5.5', '--size', '0.5'])).outputs[2]!.value).toMatch(
      /^none: Table 1 lists whole classes/,
    );
  });

  it('sample-volume: ISO 5 at 0.5 µm needs 5.69 L (20/C_n × 1000 L, ISO 14644-1:2015 A.4.4)', async () => {
    const r = await calcJson(['sample-volume', '--class', '5', '--size', '0.5']);
    expect(r.outputs[0]!.value).toBeCloseTo(5.687, 3);
  });

  it('locations: 52 m² needs 10 locations (ISO 14644-1:2015 Table A.1)', async () => {
    const r = await calcJson(['locations', '--area', '52']);
    expect(r.outputs[0]!.value).toBe(10);
  });

  it('deposition-velocity: 0.2 µm onto a 300 mm wafer face up at 0.3 m/s is about 3.6e-6 m/s (stagnation-flow formula, hand computation)', async () => {
    const r = await calcJson(['deposition-velocity', '--size', '0.2']);
    // Tolerance 3 %: the check value is quoted to two figures.
    expect(r.outputs[0]!.value as number).toBeGreaterThan(3.6e-6 * 0.97);
    expect(r.outputs[0]!.value as number).toBeLessThan(3.6e-6 * 1.03);
  });

  it('poisson-interval: n = 10 → [4.7954, 18.3904] (Garwood 1936)', async () => {
    const r = await calcJson(['poisson-interval', '--count', '10']);
    expect(r.outputs[0]!.value).toBeCloseTo(4.7954, 4);
    expect(r.outputs[1]!.value).toBeCloseTo(18.3904, 4);
  });

  it('void-radius: two flexible 525 µm wafers, W = 0.1 J/m², h = 1 µm → R = 2.942 mm (R⁴ = 8 D_eff h²/W, hand computation)', async () => {
    const r = await calcJson(['void-radius', '--top', '525', '--bottom', '525', '--energy', '0.1']);
    expect(r.outputs[0]!.value as number).toBeCloseTo(2.942, 3);
    expect(r.outputs[2]!.value).toBe('thick plate (R ≥ 2t)');
  });

  it('void-radius: textbook preset, 525 µm, γ = 0.1 J/m² per surface → R = 3.499 mm (Tong & Gösele 1999 form)', async () => {
    const r = await calcJson([
      'void-radius',
      '--model',
      'textbook',
      '--top',
      '525',
      '--energy',
      '0.1',
      '--convention',
      'per-surface-gamma',
    ]);
    expect(r.outputs[0]!.value as number).toBeCloseTo(3.499, 3);
  });

  it('die-yield: 10 × 5 mm die, R = 1 mm → A_c = 83.1416 mm²; at λA = 0.5 Poisson 0.6065, NB(α=2) 0.6400, Murphy 0.6193 (Minkowski sum; Stapper 1983; Murphy 1964)', async () => {
    // λ chosen so that λ·A_c = 0.5: 0.5 / 83.1416 mm² = 0.601383 per cm².
    const lambdaPerCm2 = (0.5 / 83.14159265) * 100;
    const r = await calcJson([
      'die-yield',
      '--density',
      String(lambdaPerCm2),
      '--radius',
      '1',
      '--alpha',
      '2',
    ]);
    expect(r.outputs[0]!.value as number).toBeCloseTo(83.1416, 4);
    expect(r.outputs[1]!.value as number).toBeCloseTo(0.5, 6);
    expect(r.outputs[2]!.value as number).toBeCloseTo(0.6065, 4);
    expect(r.outputs[3]!.value as number).toBeCloseTo(0.64, 4);
    expect(r.outputs[4]!.value as number).toBeCloseTo(0.6193, 4);
  });

  it('prints a readable table with the formula and the source', async () => {
    const t = cli();
    expect(await main(['calc', 'class-limit', '--class', '5', '--size', '0.5'], t.io)).toBe(0);
    expect(t.out()).toMatch(/Class limit\s+3,516\.76 particles\/m³/);
    expect(t.out()).toContain('source:  ISO 14644-1:2015');
  });

  it('rejects a value out of range with exit 2, naming the option, its label and its range', async () => {
    const t = cli();
    expect(await main(['calc', 'class-limit', '--class', '12'], t.io)).toBe(2);
    expect(t.err().split('\n')[0]).toBe(
      'voidcast calc class-limit: --class (ISO class N) must be at least 1 and at most 9; got 12',
    );
  });

  it('a negative number is read as the value it is and refused by its rule, not as an option', async () => {
    const t = cli();
    expect(await main(['calc', 'void-radius', '--size', '-1'], t.io)).toBe(2);
    expect(t.err().split('\n')[0]).toBe(
      'voidcast calc void-radius: --size (Particle diameter d) must be positive and at most 10000 µm; got -1',
    );
    const u = cli();
    expect(await main(['calc', 'deposition-velocity', '--temperature', '-20'], u.io)).toBe(0);
  });

  it('never shows a model function or parameter name: every field beyond its range, every calculator', async () => {
    for (const c of CALCULATORS)
      for (const f of c.fields) {
        if (!f.range) continue;
        for (const bad of ['-1e9', '1e300', f.range.integer ? '0.5' : null].filter((x) => x !== null)) {
          const t = cli();
          const code = await main(['calc', c.id, `--${f.name}`, bad as string], t.io);
          if (code === 0) continue; // within range for this field (e.g. a density may be large)
          expect(code).toBe(2);
          const line = t.err().split('\n')[0]!;
          expect(line, `${c.id} --${f.name} ${bad}`).toMatch(
            new RegExp(`^voidcast calc ${c.id}: (--${f.name} \\(|These inputs together)`),
          );
          // internal names look like camelCase identifiers followed by ':' or ' = ' (isoClassLimit: classN = …)
          expect(line).not.toMatch(/[a-z]+[A-Z][A-Za-z]*(:| =)/);
        }
      }
  });

  it('a combination the model refuses is explained in words, not by the model function', async () => {
    const t = cli();
    expect(await main(['calc', 'void-radius', '--size', '1000', '--top', '500'], t.io)).toBe(2);
    expect(t.err().split('\n')[0]).toBe(
      'voidcast calc void-radius: These inputs together are outside the range the model accepts: the particle height k_h × d must be below the thickness of the thinner flexible plate, and the work of adhesion at most 100 J/m² (W = 2γ with the per-surface convention, so γ at most 50 J/m²).',
    );
  });

  it('rejects text where a number belongs, and an unknown calculator', async () => {
    const t = cli();
    expect(await main(['calc', 'class-limit', '--size', '0,5'], t.io)).toBe(2);
    expect(t.err().split('\n')[0]).toBe(
      'voidcast calc class-limit: --size (Particle size D) must be a number (use a point for decimals, e.g. 0.5); got "0,5"',
    );
    const u = cli();
    expect(await main(['calc', 'frobnicate'], u.io)).toBe(2);
    expect(u.err().split('\n')[0]).toBe('voidcast calc: unknown calculator "frobnicate"');
  });
});

describe('Calculators page', () => {
  it('shows ISO 14644-1 Table 1 class 1 at 0.1 µm as 10, and a blank cell with what the standard calls it (Table 1 and its notes)', async () => {
    const cell = async (q: string) => {
      const html = await (await app().request(`/calculators/class-limit/result?${q}`)).text();
      return /Table 1 value[\s\S]*?<\/dd>|Table 1 value[\s\S]{0,400}/
        .exec(html)![0]
        .replace(/<[^>]+>/g, ' ')
        .replace(/\s+/g, ' ');
    };
    expect(await cell('class=1&size=0.1')).toContain('10 particles/m³');
    expect(await cell('class=7&size=0.1')).toContain('blank — not applicable');
    expect(await cell('class=1&size=0.2')).toContain('blank — classification inappropriate');
  });

  it('renders every calculator with its formula and source', async () => {
    const res = await app().request('/calculators');
    expect(res.status).toBe(200);
    const html = await res.text();
    for (const c of CALCULATORS) {
      expect(html).toContain(`id="calc-${c.id}"`);
      expect(html).toContain(`hx-get="/calculators/${c.id}/result"`);
    }
    expect(html).toContain('ISO 14644-1:2015, eq. (1) and Table 1');
  });

  it('answers the htmx request with the result block alone', async () => {
    const res = await app().request('/calculators/class-limit/result?class=5&size=0.5', {
      headers: { 'HX-Request': 'true' },
    });
    const html = await res.text();
    expect(html.startsWith('<div class="vc-calc-result" id="calc-class-limit-result"')).toBe(true);
    expect(html).toContain('3,516.76');
    expect(html).not.toContain('<html');
  });

  it('shows a bad input in place with status 200 (htmx 2 does not swap 4xx) and escapes it', async () => {
    const res = await app().request('/calculators/class-limit/result?class=5&size=%3Cb%3E');
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toContain('role="alert"');
    expect(html).toContain('got &quot;&lt;b&gt;&quot;');
  });

  it('works without script: the form GET returns the whole page with that result', async () => {
    const res = await app().request('/calculators/locations?area=1500');
    const html = await res.text();
    expect(html.startsWith('<!doctype html>')).toBe(true);
    // 27 × 1500/1000 = 40.5 → 41 (ISO 14644-1:2015 Table A.1, above 1000 m²)
    expect(html).toMatch(/data-output="Sampling locations">41</);
  });
});
