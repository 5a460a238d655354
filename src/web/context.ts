import type { Db } from '../store/db.ts';

/** What every route module receives. */
export interface AppContext {
  db: Db;
  dataDir: string;
  version: string;
  /** Where log lines go (stdout in production, a buffer in tests). */
  log: (line: string) => void;
  /** Host names besides the loopback ones this server answers to (src/web/hardening.ts). */
  allowedHosts?: string[];
  /**
   * Accounts (src/web/auth/): 'accounts' needs a signed-in account for everything; 'open' (the
   * default, and the demo's on this machine only) lets anyone who reaches the server in, with a
   * banner on every page saying so.
   */
  auth?: { mode: 'open' } | { mode: 'accounts'; sessionSecret: string };
  /**
   * false: no answer is kept between requests (src/web/page-cache.ts), every page is rendered
   * afresh — for the benches that time the rendering and the tests' plain twin. Default: kept.
   */
  keepPages?: boolean;
}
