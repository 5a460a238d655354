/**
 * The audit's one error: bad input it cannot judge (an unknown area, an area without sampling
 * locations, a baseline window too short for its method, a bad rule setting). The message is for
 * people and names what to change; `kind` lets the web answer 404 or 400 and the CLI choose its
 * exit code. A period with no data is not an error: results say "no data".
 */
export class AuditInputError extends Error {
  constructor(
    message: string,
    readonly kind: 'not-found' | 'bad-input' = 'bad-input',
  ) {
    super(message);
    this.name = 'AuditInputError';
  }
}
