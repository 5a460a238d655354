/**
 * How sensitive a call is: each uncertain input moved alone over its stated range (the tornado of
 * expected voids and die loss) and the value at which the call would change (the flip point), with
 * a table of the same numbers. Shown on the pair and lot pages (loaded after the page, by htmx, or
 * followed as a link without script) and on the what-if pages.
 */
import type { SensitivityResult, SensitivityRow } from '../../src/engine/tuning/types.ts';
import { tornado } from '../charts/tornado.tsx';
import { CallBadge } from './call.tsx';
import { fmtDies, fmtNum } from './format.ts';

/** The figures at a row's flip point (the chain run once more at the flip value), by input. */
export type FlipFigures = Record<string, { voids: number; dieLoss: number | null }>;

function fmtInput(v: number | null, unit: string): string {
  if (v === null || !Number.isFinite(v)) return '—';
  return unit === '1' || unit === '' ? fmtNum(v) : unit === '×' ? `× ${fmtNum(v)}` : `${fmtNum(v)} ${unit}`;
}

function rangeWords(r: SensitivityRow): string {
  return `${fmtInput(r.low, r.unit)} – ${fmtInput(r.high, r.unit)}`;
}

/** The place on the pair or lot page where the sensitivity section loads. */
export function SensitivitySlot(props: { href: string; subject: string }) {
  return (
    <section class="vc-sensitivity" id="sensitivity" aria-label="Sensitivity of the call">
      <h2>How sensitive the call is</h2>
      <div
        hx-get={props.href}
        hx-trigger="load"
        hx-swap="outerHTML"
        hx-select="#sensitivity-body"
        id="sensitivity-body"
      >
        <p class="vc-small">
          Each uncertain input moved alone over its range, and where the call would change:{' '}
          <a href={props.href}>show the sensitivity of {props.subject}</a> (it runs the assessment a few dozen
          times).
        </p>
      </div>
    </section>
  );
}

export function SensitivityBody(props: {
  s: SensitivityResult;
  flips: FlipFigures;
  /** The spec's limit on reportable voids (drawn on the tornado), if any. */
  voidsLimit: number | null;
  subject: string;
  /** The what-if page of the subject: each row links to it with the input at its flip value. */
  whatIfHref: string;
}) {
  const s = props.s;
  const rows = s.rows;
  const dies = s.base.dieLoss !== null;
  const top = rows[0];
  return (
    <div id="sensitivity-body" class="vc-sensitivity-body">
      <p>
        As is: <CallBadge call={s.base.call} /> with {fmtNum(s.base.voids)} expected reportable voids
        {dies ? ` and ${fmtDies(s.base.dieLoss!)} killed dies` : ''}.{' '}
        {top ? (
          <>
            Most sensitive to <strong data-most-sensitive={top.input}>{top.label}</strong>
            {top.flip.value !== null ? ` — ${top.flip.text}` : ` (${top.flip.text})`}.
          </>
        ) : null}
      </p>
      <figure class="vc-panel vc-tornado-figure">
        {tornado({
          id: 'tornado',
          width: 1040,
          title: `${props.subject}: sensitivity of expected voids${dies ? ' and die loss' : ''}`,
          panels: [
            {
              name: 'expected voids',
              asIs: s.base.voids,
              limit: props.voidsLimit !== null ? { value: props.voidsLimit, label: 'spec limit' } : null,
            },
            ...(dies ? [{ name: 'killed dies', asIs: s.base.dieLoss!, format: fmtDies }] : []),
          ],
          rows: rows.map((r) => ({
            key: r.input,
            label: r.label,
            rangeLabel: rangeWords(r),
            flipLabel: r.flip.value !== null ? `call changes at ${fmtInput(r.flip.value, r.unit)}` : null,
            values: [
              { low: r.voidsAtLow, high: r.voidsAtHigh, flipAt: props.flips[r.input]?.voids ?? null },
              ...(dies
                ? [
                    {
                      low: r.dieLossAtLow ?? Number.NaN,
                      high: r.dieLossAtHigh ?? Number.NaN,
                      flipAt: props.flips[r.input]?.dieLoss ?? null,
                    },
                  ]
                : []),
            ],
          })),
        })}
        <figcaption>
          One input at a time over its stated range, the others at their values. The voids limit drawn is the
          spec's on the bound at its confidence; the bars are central values, so a call can change before a
          bar reaches the line.
        </figcaption>
      </figure>
      <table class="vc-table vc-table-compact vc-sensitivity-table">
        <thead>
          <tr>
            <th>Input</th>
            <th class="num">As is</th>
            <th>Range (source)</th>
            <th class="num">Voids, low / high</th>
            {dies ? <th class="num">Killed dies, low / high</th> : null}
            <th>Call, low / high</th>
            <th>Flip point (call)</th>
            <th>Spec verdict changes</th>
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => (
            <tr data-input={r.input}>
              <td>{r.label}</td>
              <td class="num">{fmtInput(r.nominal, r.unit)}</td>
              <td>
                {rangeWords(r)} <span class="vc-small">({r.rangeSource})</span>
              </td>
              <td class="num">
                {fmtNum(r.voidsAtLow)} / {fmtNum(r.voidsAtHigh)}
              </td>
              {dies ? (
                <td class="num">
                  {r.dieLossAtLow === null ? '—' : fmtDies(r.dieLossAtLow)} /{' '}
                  {r.dieLossAtHigh === null ? '—' : fmtDies(r.dieLossAtHigh)}
                </td>
              ) : null}
              <td>
                <CallBadge call={r.callAtLow} /> / <CallBadge call={r.callAtHigh} />
              </td>
              <td data-flip={r.flip.value === null ? 'none' : String(r.flip.value)}>{r.flip.text}</td>
              <td
                data-spec-flip={r.specFlip?.value === null || !r.specFlip ? 'none' : String(r.specFlip.value)}
              >
                {r.specFlip?.text ?? '—'}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      {s.notVaried.length > 0 ? (
        <ul class="vc-notes">
          {s.notVaried.map((n) => (
            <li>
              {n.input}: not varied — {n.reason}
            </li>
          ))}
        </ul>
      ) : null}
      <p class="vc-small">
        Try a change yourself on the <a href={props.whatIfHref}>what-if page</a>.
      </p>
    </div>
  );
}

/** In place of the tornado when the chain cannot vary an input on these data: the reason. */
export function SensitivityUnavailable(props: { reason: string }) {
  return (
    <div id="sensitivity-body" class="vc-sensitivity-body" data-unavailable="yes">
      <p class="vc-error" role="status">
        The sensitivity of this call cannot be computed on these data: {props.reason} The figures and the call
        above are not affected.
      </p>
    </div>
  );
}

/** The sensitivity on a page of its own (followed as a link without script). */
export function SensitivityPage(props: { kind: 'pair' | 'lot'; id: string; lotId?: string; body: unknown }) {
  const enc = encodeURIComponent;
  return (
    <section class="vc-sensitivity-page">
      <p class="vc-crumbs">
        <a href="/lots">Lots</a> ›{' '}
        {props.kind === 'pair' ? (
          <>
            <a href={`/lots/${enc(props.lotId ?? '')}`}>{props.lotId}</a> ›{' '}
            <a href={`/pairs/${enc(props.id)}`}>{props.id}</a>
          </>
        ) : (
          <a href={`/lots/${enc(props.id)}`}>{props.id}</a>
        )}{' '}
        › sensitivity
      </p>
      <h1>
        How sensitive the call of {props.kind} {props.id} is
      </h1>
      <section class="vc-sensitivity" id="sensitivity">
        {props.body as never}
      </section>
    </section>
  );
}
