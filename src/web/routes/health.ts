import type { Hono } from 'hono';
import { databaseHealth } from '../../store/db.ts';
import type { AppContext } from '../context.ts';

export function register(app: Hono, ctx: AppContext): void {
  app.get('/healthz', (c) => {
    const db = databaseHealth(ctx.db);
    return c.json(
      { status: db.ok ? 'ok' : 'degraded', version: ctx.version, database: db },
      db.ok ? 200 : 503,
    );
  });
}
