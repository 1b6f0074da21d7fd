/**
 * OmegaConf interpolation over a located document: `${a.b}` (absolute), `${.x}` and `${..x}`
 * (relative to the map that holds the key: one dot is that map, each further dot one level up),
 * `${oc.env:NAME,default}` (the default; the environment of the run is unknown here, and OmegaConf
 * hands the default over as a string) and strings with interpolations inside (`run_${a}`), which
 * stay strings. A value that cannot be resolved is reported, never turned into a number problem.
 * Recalled from memory of OmegaConf 2.3 (grammar of interpolations, oc.env resolver).
 */
import type { LocatedMap, LocatedNode, LocatedScalar, ScalarValue } from '../parse/types';

export interface Interpolation {
  scalar: LocatedScalar;
  /** Dotted path of the key that holds it. */
  path: string;
  raw: string;
  /** The value the loader hands over, or null when it cannot be resolved. */
  resolved: { value: ScalarValue } | null;
  /** Why it cannot be resolved. */
  problem?: string;
}

interface Place {
  scalar: LocatedScalar;
  /** Key segments of the map holding the key (container), and the key itself. */
  container: string[];
  key: string;
}

const FULL = /^\$\{([^${}]+)\}$/;
const ANY = /\$\{([^${}]+)\}/g;
const MAX_DEPTH = 16;
const MAX_VISITS = 1_000_000;

function lookup(root: LocatedNode, segments: string[]): LocatedNode | null {
  let node: LocatedNode | null = root;
  for (const seg of segments) {
    if (!node) return null;
    if (node.kind === 'map') {
      const entry: LocatedMap['entries'][number] | undefined = node.entries.find((e) => e.key === seg);
      node = entry?.value ?? null;
    } else if (node.kind === 'list' && /^\d+$/.test(seg)) {
      node = node.items[Number(seg)] ?? null;
    } else return null;
  }
  return node;
}

/** Resolves every interpolation of the document in place (scalar values) and lists them. */
export function resolveInterpolations(root: LocatedNode | null): Interpolation[] {
  const out: Interpolation[] = [];
  if (!root) return out;
  const places: Place[] = [];
  const stack: { node: LocatedNode; segs: string[] }[] = [{ node: root, segs: [] }];
  let visits = 0;
  while (stack.length > 0 && visits++ < MAX_VISITS) {
    const { node, segs } = stack.pop()!;
    if (node.kind === 'map') {
      for (const e of node.entries) {
        if (!e.value) continue;
        if (e.value.kind === 'scalar') {
          if (typeof e.value.value === 'string' && e.value.value.includes('${')) places.push({ scalar: e.value, container: segs, key: e.key });
        } else stack.push({ node: e.value, segs: [...segs, e.key] });
      }
    } else if (node.kind === 'list') {
      node.items.forEach((item, i) => {
        if (item.kind !== 'scalar') stack.push({ node: item, segs: [...segs, String(i)] });
      });
    }
  }
  const original = new Map<LocatedScalar, string>(places.map((p) => [p.scalar, p.scalar.value as string]));

  const resolveExpr = (expr: string, container: string[], depth: number): { value: ScalarValue } | { problem: string } => {
    const e = expr.trim();
    if (e.startsWith('oc.env:')) {
      const [name, ...rest] = e.slice('oc.env:'.length).split(',');
      if (rest.length === 0)
        return { problem: `\${${e}} needs the environment variable ${name!.trim()}, which is not known here and has no default` };
      const def = rest
        .join(',')
        .trim()
        .replace(/^(['"])(.*)\1$/, '$2');
      return { value: def === 'null' ? null : def };
    }
    if (/^[A-Za-z_][\w.]*:/.test(e)) return { problem: `\${${e}} uses a resolver this tool does not run` };
    let segments: string[];
    const dots = /^\.+/.exec(e)?.[0].length ?? 0;
    const rest = e
      .slice(dots)
      .split('.')
      .filter((s) => s !== '');
    if (dots === 0) segments = rest;
    else {
      const up = dots - 1;
      if (up > container.length) return { problem: `\${${e}} points above the top of the document` };
      segments = [...container.slice(0, container.length - up), ...rest];
    }
    const target = lookup(root, segments);
    if (!target) return { problem: `\${${e}} points at ${segments.join('.') || 'nothing'}, which the document does not have` };
    if (target.kind !== 'scalar') return { problem: `\${${e}} points at a section, not a value` };
    const text = original.get(target);
    if (text !== undefined) {
      if (depth >= MAX_DEPTH) return { problem: `\${${e}} does not resolve (interpolations form a cycle)` };
      const place = places.find((p) => p.scalar === target)!;
      return resolveString(text, place.container, depth + 1);
    }
    return { value: target.value };
  };

  const resolveString = (text: string, container: string[], depth: number): { value: ScalarValue } | { problem: string } => {
    const full = FULL.exec(text.trim());
    if (full) return resolveExpr(full[1]!, container, depth);
    let problem: string | null = null;
    const joined = text.replace(ANY, (_m, expr: string) => {
      const r = resolveExpr(expr, container, depth);
      if ('problem' in r) {
        problem ??= r.problem;
        return '';
      }
      return String(r.value);
    });
    return problem ? { problem } : { value: joined };
  };

  for (const p of places) {
    const raw = original.get(p.scalar)!;
    const r = resolveString(raw, p.container, 0);
    const path = [...p.container, p.key].join('.');
    if ('problem' in r) {
      p.scalar.value = null;
      out.push({ scalar: p.scalar, path, raw, resolved: null, problem: r.problem });
    } else {
      p.scalar.value = r.value;
      out.push({ scalar: p.scalar, path, raw, resolved: { value: r.value } });
    }
  }
  return out;
}
