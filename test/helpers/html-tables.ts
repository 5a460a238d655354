/**
 * Reads the tables of a rendered page (views/pages/audit-table.tsx markup) the way a download
 * should hold them: for each <table data-table="id">, the header cells' words and, per body row,
 * each cell's `data-value` where it has one, else its text (tags dropped, entities decoded). And
 * the download links beside each table.
 */

const ENTITIES: Record<string, string> = { lt: '<', gt: '>', amp: '&', quot: '"', apos: "'", nbsp: '\u00a0' };

export function decodeHtml(s: string): string {
  return s.replace(/&(#x[0-9a-f]+|#\d+|[a-z]+);/gi, (m, e: string) => {
    if (e[0] === '#')
      return String.fromCodePoint(
        e[1] === 'x' || e[1] === 'X' ? parseInt(e.slice(2), 16) : parseInt(e.slice(1), 10),
      );
    return ENTITIES[e] ?? m;
  });
}

function textOf(html: string): string {
  return decodeHtml(html.replace(/<[^>]*>/g, '')).trim();
}

export interface HtmlTable {
  id: string;
  header: string[];
  rows: string[][];
}

/** Every table with a data-table attribute, in page order. */
export function htmlTables(html: string): HtmlTable[] {
  const out: HtmlTable[] = [];
  for (const m of html.matchAll(/<table\b[^>]*\bdata-table="([^"]+)"[^>]*>([\s\S]*?)<\/table>/g)) {
    const body = m[2]!;
    const head = /<thead>([\s\S]*?)<\/thead>/.exec(body)?.[1] ?? '';
    const header = [...head.matchAll(/<th\b[^>]*>([\s\S]*?)<\/th>/g)].map((h) => textOf(h[1]!));
    const tbody = /<tbody>([\s\S]*?)<\/tbody>/.exec(body)?.[1] ?? '';
    const rows = [...tbody.matchAll(/<tr\b[^>]*>([\s\S]*?)<\/tr>/g)].map((r) =>
      [...r[1]!.matchAll(/<td\b([^>]*)>([\s\S]*?)<\/td>|<td\b([^>]*)\/>/g)].map((c) => {
        const attrs = c[1] ?? c[3] ?? '';
        const v = /\bdata-value="([^"]*)"/.exec(attrs);
        return v ? decodeHtml(v[1]!) : textOf(c[2] ?? '');
      }),
    );
    out.push({ id: decodeHtml(m[1]!), header, rows });
  }
  return out;
}

/** The download links beside each table: table id → { csv, xls-csv, json } hrefs. */
export function downloadLinks(html: string): Map<string, Record<string, string>> {
  const out = new Map<string, Record<string, string>>();
  for (const m of html.matchAll(/<p class="vc-downloads" data-downloads="([^"]+)">([\s\S]*?)<\/p>/g)) {
    const links: Record<string, string> = {};
    for (const a of m[2]!.matchAll(/<a href="([^"]+)">([^<]+)<\/a>/g)) {
      const href = decodeHtml(a[1]!);
      const f = new URL(href, 'http://x').searchParams.get('format') ?? '';
      links[f] = href;
    }
    out.set(decodeHtml(m[1]!), links);
  }
  return out;
}
