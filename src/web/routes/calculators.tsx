import type { Hono } from 'hono';
import { type CalcCardState, CalcResultPanel, CalculatorsPage } from '../../../views/pages/calculators.tsx';
import {
  CALCULATORS,
  CalcInputError,
  type Calculator,
  findCalculator,
  runCalculator,
} from '../../engine/calculators.ts';
import type { AppContext } from '../context.ts';
import { renderFragment, renderPage } from '../render.ts';

function cardState(calc: Calculator, query: Record<string, string>): CalcCardState {
  const values: Record<string, string> = {};
  for (const f of calc.fields) values[f.name] = query[f.name] ?? f.default;
  try {
    return { calc, values, result: runCalculator(calc, values), error: null };
  } catch (e) {
    if (e instanceof CalcInputError)
      return { calc, values, result: null, error: { field: e.field, message: e.message } };
    throw e;
  }
}

export function register(app: Hono, ctx: AppContext): void {
  const page = (query: Record<string, string>, only?: string) =>
    CalculatorsPage({ cards: CALCULATORS.map((c) => cardState(c, c.id === only ? query : {})) });

  app.get('/calculators', (c) =>
    renderPage(c, ctx, { title: 'Calculators', active: '/calculators', body: page({}) }),
  );

  // Without script: the form submits here and the whole page comes back with this card's result.
  app.get('/calculators/:id', (c) => {
    const calc = findCalculator(c.req.param('id'));
    if (!calc) return c.notFound();
    // A bad input is shown in its card, with status 400 (the card names the field and the rule).
    const bad = cardState(calc, c.req.query()).error !== null;
    return renderPage(
      c,
      ctx,
      { title: calc.title, active: '/calculators', body: page(c.req.query(), calc.id) },
      bad ? 400 : 200,
    );
  });

  // With htmx: only the result block, swapped in place. Errors come back as 200 with the message
  // shown in the block (htmx 2 does not swap 4xx responses by default).
  app.get('/calculators/:id/result', (c) => {
    const calc = findCalculator(c.req.param('id'));
    if (!calc) return c.notFound();
    return renderFragment(c, CalcResultPanel(cardState(calc, c.req.query())));
  });
}
