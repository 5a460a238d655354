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
}
