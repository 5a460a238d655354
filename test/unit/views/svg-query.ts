/**
 * A small, strict XML reader for chart tests: parses the SVG a chart returns into a tree and
 * answers structural questions (elements by class, text content, attributes). It throws on
 * unbalanced tags, so every chart test also checks that the output is well-formed.
 */
export interface El {
  name: string;
  attrs: Record<string, string>;
  children: El[];
  text: string; // direct text children, decoded
  parent: El | null;
}

const ENTITIES: Record<string, string> = { lt: '<', gt: '>', amp: '&', quot: '"', apos: "'" };

export function decode(s: string): string {
  return s.replace(/&(#x[0-9a-f]+|#\d+|[a-z]+);/gi, (m, e: string) => {
    if (e[0] === '#')
      return String.fromCodePoint(
        e[1] === 'x' || e[1] === 'X' ? parseInt(e.slice(2), 16) : parseInt(e.slice(1), 10),
      );
    const v = ENTITIES[e];
    if (v === undefined) throw new Error(`unknown entity ${m}`);
    return v;
  });
}

export function parseXml(src: string): El {
  const root: El = { name: '#root', attrs: {}, children: [], text: '', parent: null };
  let cur = root;
  const re = /<!--[\s\S]*?-->|<(\/?)([A-Za-z][\w:.-]*)((?:\s+[\w:.-]+(?:="[^"]*")?)*)\s*(\/?)>|([^<]+)|(<)/g;
  for (const m of src.matchAll(re)) {
    if (m[0].startsWith('<!--')) continue;
    if (m[6]) throw new Error(`stray '<' at ${m.index}: ${src.slice(m.index, m.index + 40)}`);
    if (m[5] !== undefined) {
      if (/[<>]/.test(m[5])) throw new Error(`raw angle bracket in text: ${m[5]}`);
      cur.text += decode(m[5]);
      continue;
    }
    const [, close, name, attrSrc, selfClose] = m;
    if (close) {
      if (cur.name !== name) throw new Error(`</${name}> closes <${cur.name}>`);
      cur = cur.parent!;
      continue;
    }
    const attrs: Record<string, string> = {};
    for (const a of attrSrc!.matchAll(/([\w:.-]+)(?:="([^"]*)")?/g)) {
      if (a[2] !== undefined && /[<>]/.test(a[2])) throw new Error(`raw angle bracket in attribute ${a[1]}`);
      attrs[a[1]!] = decode(a[2] ?? '');
    }
    const el: El = { name: name!, attrs, children: [], text: '', parent: cur };
    cur.children.push(el);
    if (!selfClose) cur = el;
  }
  if (cur !== root) throw new Error(`<${cur.name}> is never closed`);
  return root;
}

export function all(el: El, pred: (e: El) => boolean): El[] {
  const out: El[] = [];
  const walk = (e: El) => {
    for (const c of e.children) {
      if (pred(c)) out.push(c);
      walk(c);
    }
  };
  walk(el);
  return out;
}

export function hasClass(e: El, cls: string): boolean {
  return (e.attrs.class ?? '').split(/\s+/).includes(cls);
}

export function byClass(el: El, cls: string): El[] {
  return all(el, (e) => hasClass(e, cls));
}

export function byName(el: El, name: string): El[] {
  return all(el, (e) => e.name === name);
}

/** All text below an element, concatenated. */
export function textOf(el: El): string {
  return el.text + el.children.map(textOf).join('');
}

/** Parses a chart's output and returns its single <svg> element. */
export function svgOf(rendered: unknown): El {
  const root = parseXml(String(rendered));
  const svgs = root.children.filter((c) => c.name === 'svg');
  if (svgs.length !== 1) throw new Error(`expected one <svg>, found ${svgs.length}`);
  return svgs[0]!;
}

/** Every id in the tree and every url(#id) reference resolves. */
export function danglingRefs(svg: El): string[] {
  const ids = new Set(all(svg, (e) => e.attrs.id !== undefined).map((e) => e.attrs.id!));
  const refs: string[] = [];
  for (const e of all(svg, () => true))
    for (const v of Object.values(e.attrs)) for (const m of v.matchAll(/url\(#([^)]+)\)/g)) refs.push(m[1]!);
  return refs.filter((r) => !ids.has(r));
}
