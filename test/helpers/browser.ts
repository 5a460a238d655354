/**
 * Browser-test harness: a real voidcast server (own process, temporary data directory, free
 * loopback port) and Debian's Chromium driven by playwright-core.
 *
 * Locally, when /usr/bin/chromium is absent, `chromiumAvailable()` is false and browser tests
 * skip with a printed reason. In CI (CI=true) a missing Chromium is an error, never a skip.
 */
import { type ChildProcess, spawn } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { type BrowserContext, chromium } from 'playwright-core';

export const CHROMIUM_PATH = process.env.VOIDCAST_CHROMIUM ?? '/usr/bin/chromium';
export const REPO_ROOT = resolve(import.meta.dirname, '..', '..');
export const SCREENSHOT_DIR = join(REPO_ROOT, 'test-results', 'screenshots');

/** True when Chromium can be used. Throws in CI when it is missing, so CI never skips silently. */
export function chromiumAvailable(): boolean {
  const ok = existsSync(CHROMIUM_PATH);
  if (!ok && process.env.CI === 'true')
    throw new Error(
      `CI=true but Chromium is not at ${CHROMIUM_PATH}; .ci/run must install it (apt-get install -y chromium)`,
    );
  if (!ok)
    console.warn(
      `[browser tests skipped] Chromium not found at ${CHROMIUM_PATH}; install it with: apt-get install -y chromium`,
    );
  return ok;
}

export interface TestServer {
  url: string;
  dataDir: string;
  output: () => string;
  stop: () => Promise<void>;
}

/**
 * Starts `voidcast serve` as its own process (what `npm start` runs) on a free port, in open mode
 * (nobody signs in) unless `accounts` is set. `args` are passed on (e.g. ['--empty']); env adds
 * variables.
 */
export async function startTestServer(
  opts: { args?: string[]; env?: Record<string, string>; dataDir?: string; accounts?: boolean } = {},
): Promise<TestServer> {
  const dataDir = opts.dataDir ?? mkdtempSync(join(tmpdir(), 'voidcast-test-'));
  const child: ChildProcess = spawn(
    process.execPath,
    [
      '--import',
      'tsx',
      join(REPO_ROOT, 'src/cli/main.ts'),
      'serve',
      '--port',
      '0',
      '--data',
      dataDir,
      ...(opts.accounts ? [] : ['--open']),
      ...(opts.args ?? []),
    ],
    {
      cwd: REPO_ROOT,
      env: { ...process.env, ...opts.env, NO_COLOR: '1' },
      stdio: ['ignore', 'pipe', 'pipe'],
    },
  );
  let out = '';
  child.stdout?.on('data', (b: Buffer) => {
    out += b.toString();
  });
  child.stderr?.on('data', (b: Buffer) => {
    out += b.toString();
  });
  const url = await new Promise<string>((resolveUrl, reject) => {
    const timer = setTimeout(() => reject(new Error(`server did not start within 90 s:\n${out}`)), 90_000);
    const check = () => {
      const m = /running at (http:\/\/127\.0\.0\.1:\d+\/)/.exec(out);
      if (m) {
        clearTimeout(timer);
        resolveUrl(m[1]!);
      }
    };
    child.stdout?.on('data', check);
    child.once('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`server exited with ${code} before it was ready:\n${out}`));
    });
  });
  return {
    url,
    dataDir,
    output: () => out,
    stop: async () => {
      if (child.exitCode === null) {
        const exited = new Promise((r) => child.once('exit', r));
        child.kill('SIGTERM');
        await exited;
      }
      if (!opts.dataDir) rmSync(dataDir, { recursive: true, force: true });
    },
  };
}

/** A fresh Chromium profile in a temporary directory, headless, with the network quiet flags. */
export async function launchBrowser(): Promise<{ context: BrowserContext; close: () => Promise<void> }> {
  const profile = mkdtempSync(join(tmpdir(), 'voidcast-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM_PATH,
    headless: true,
    viewport: { width: 1360, height: 900 },
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  return {
    context,
    close: async () => {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

export function screenshotPath(name: string): string {
  mkdirSync(SCREENSHOT_DIR, { recursive: true });
  return join(SCREENSHOT_DIR, `${name}.png`);
}
