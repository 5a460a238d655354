/**
 * Throttling of failed sign-ins (OWASP Authentication Cheat Sheet, "Protect against automated
 * attacks"): after 5 failures for one user name within 15 minutes, or 20 from one address, further
 * attempts are refused for the rest of the window (429), whether the password would be right or not.
 * A successful sign-in clears the user name's count. Counts live in the server's memory.
 */
export const THROTTLE = { perUser: 5, perAddress: 20, windowMs: 15 * 60_000 } as const;

export class LoginThrottle {
  private readonly failures = new Map<string, number[]>();

  constructor(private readonly now: () => number = Date.now) {}

  private recent(key: string): number[] {
    const t = this.now();
    const list = (this.failures.get(key) ?? []).filter((x) => t - x < THROTTLE.windowMs);
    if (list.length) this.failures.set(key, list);
    else this.failures.delete(key);
    return list;
  }

  /** Milliseconds until another attempt is allowed; 0 when it is allowed now. */
  waitMs(username: string, address: string): number {
    const t = this.now();
    let wait = 0;
    for (const [key, limit] of [
      [`u:${username.toLowerCase()}`, THROTTLE.perUser],
      [`a:${address}`, THROTTLE.perAddress],
    ] as const) {
      const list = this.recent(key);
      if (list.length >= limit) wait = Math.max(wait, list[list.length - limit]! + THROTTLE.windowMs - t);
    }
    return wait;
  }

  fail(username: string, address: string): void {
    const t = this.now();
    for (const key of [`u:${username.toLowerCase()}`, `a:${address}`])
      this.failures.set(key, [...this.recent(key), t]);
  }

  succeed(username: string): void {
    this.failures.delete(`u:${username.toLowerCase()}`);
  }
}
