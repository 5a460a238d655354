/** docs/models.md must list every function the model library exports (issue: "lists every function"). */
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import * as model from '../../../src/model/index.ts';

const DOC = readFileSync(resolve(import.meta.dirname, '../../../docs/models.md'), 'utf8');

describe('docs/models.md', () => {
  const functions = Object.entries(model)
    .filter(([name, v]) => typeof v === 'function' && !/^[A-Z]/.test(name))
    .map(([name]) => name);

  it('knows the library has functions to document', () => {
    expect(functions.length).toBeGreaterThan(40);
  });

  it('names every exported model function', () => {
    const missing = functions.filter((name) => !new RegExp(`\\b${name}\\b`).test(DOC));
    expect(missing).toEqual([]);
  });

  it('marks voidcast’s own modelling choices', () => {
    for (const topic of ['spectrum', 'small gap', 'removal efficiency as a logistic'])
      expect(DOC.toLowerCase()).toContain(topic);
  });
});
