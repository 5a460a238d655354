/**
 * In-page check that a chart's words can be read: for every top-level <svg> of the page, no <text>
 * element's box leaves the SVG's drawing area and no two <text> boxes overlap.
 *
 * Boxes are what Chromium lays out (getBoundingClientRect: the glyph cells, advance width × the
 * font's ascent + descent, after every transform), so a label counts as overlapping before its ink
 * does — the check is stricter than the eye. The drawing area is the SVG's content box (its CSS
 * border excluded): an outer <svg> clips what leaves it.
 *
 * Tolerance: 0.5 px. Charts round coordinates to 0.1 px and Chromium places glyph cells at
 * fractional pixels, so boxes that merely touch can report a few hundredths of a pixel of overlap;
 * half a pixel of overlap is below what antialiasing shows, while a real collision is a line's
 * height (≈ 13 px at the charts' 11 px type) or a character's width (≈ 6 px).
 *
 * The check runs in the page as a plain script (a string, so that no transpiled helper leaks into
 * the browser) and returns what it found, in words.
 */

export const LAYOUT_TOLERANCE_PX = 0.5;

export interface LayoutProblem {
  /** The chart: its id, else its data-chart kind, else its position on the page. */
  chart: string;
  /** Its data-chart kind ("trend", "pareto" …), or "" for an SVG that is not a chart. */
  chartKind: string;
  kind: 'outside' | 'overlap';
  text: string;
  /** For an overlap, the other label; for a text outside, the sides it crosses and by how much. */
  other: string;
}

export interface LayoutReport {
  charts: number;
  /** The data-chart kinds of the SVGs checked. */
  kinds: string[];
  texts: number;
  problems: LayoutProblem[];
}

/** The expression page.evaluate runs; it returns a LayoutReport. */
export const SVG_LAYOUT_CHECK = `(() => {
  const TOL = ${LAYOUT_TOLERANCE_PX};
  const problems = [];
  let charts = 0;
  let texts = 0;
  const kinds = [];
  const svgs = Array.from(document.querySelectorAll('svg')).filter(
    (s) => !s.parentElement || s.parentElement.closest('svg') === null,
  );
  svgs.forEach((svg, n) => {
    const kind = svg.getAttribute('data-chart') || '';
    const name = svg.id || kind || 'svg #' + n;
    const outer = svg.getBoundingClientRect();
    if (outer.width === 0 || outer.height === 0) return;
    charts++;
    if (kind) kinds.push(kind);
    const area = {
      left: outer.left + svg.clientLeft,
      top: outer.top + svg.clientTop,
      right: outer.left + svg.clientLeft + svg.clientWidth,
      bottom: outer.top + svg.clientTop + svg.clientHeight,
    };
    const boxes = [];
    for (const t of Array.from(svg.querySelectorAll('text'))) {
      const words = (t.textContent || '').trim();
      if (!words) continue;
      const b = t.getBoundingClientRect();
      if (b.width === 0 && b.height === 0) continue;
      texts++;
      boxes.push({ words, b });
      const out = [];
      if (b.left < area.left - TOL) out.push('left by ' + (area.left - b.left).toFixed(1) + ' px');
      if (b.right > area.right + TOL) out.push('right by ' + (b.right - area.right).toFixed(1) + ' px');
      if (b.top < area.top - TOL) out.push('top by ' + (area.top - b.top).toFixed(1) + ' px');
      if (b.bottom > area.bottom + TOL) out.push('bottom by ' + (b.bottom - area.bottom).toFixed(1) + ' px');
      if (out.length) problems.push({ chart: name, chartKind: kind, kind: 'outside', text: words, other: out.join(', ') });
    }
    for (let i = 0; i < boxes.length; i++)
      for (let j = i + 1; j < boxes.length; j++) {
        const a = boxes[i].b;
        const c = boxes[j].b;
        const w = Math.min(a.right, c.right) - Math.max(a.left, c.left);
        const h = Math.min(a.bottom, c.bottom) - Math.max(a.top, c.top);
        if (w > TOL && h > TOL)
          problems.push({
            chart: name,
            chartKind: kind,
            kind: 'overlap',
            text: boxes[i].words,
            other: boxes[j].words + ' (' + w.toFixed(1) + ' × ' + h.toFixed(1) + ' px)',
          });
      }
  });
  return { charts, kinds, texts, problems };
})()`;
