/**
 * Form bodies and query strings with bracketed keys, as the official SDK encodes them:
 * `line_items[0][price_data][currency]=gbp&metadata[order_id]=42&expand[0]=line_items`.
 * Numeric segments build arrays, other segments build objects; `a[]=x` appends.
 */

export type FormValue = string | FormValue[] | { [key: string]: FormValue };
export type FormObject = { [key: string]: FormValue };

export class FormError extends Error {
  constructor(
    message: string,
    readonly param: string | null,
  ) {
    super(message);
  }
}

const FORBIDDEN = new Set(['__proto__', 'prototype', 'constructor']);

/** Splits `a[b][0][c]` into ['a', 'b', '0', 'c']; `a[]` gives ['a', '']. Null when malformed. */
export function splitKey(key: string): string[] | null {
  const open = key.indexOf('[');
  if (open === -1) return key === '' ? null : [key];
  const head = key.slice(0, open);
  if (head === '') return null;
  const parts = [head];
  let rest = key.slice(open);
  while (rest.length > 0) {
    const match = /^\[([^[\]]*)\]/.exec(rest);
    if (!match) return null;
    parts.push(match[1] ?? '');
    rest = rest.slice(match[0].length);
  }
  return parts;
}

type Node = { kind: 'leaf'; value: string } | { kind: 'branch'; children: Map<string, Node>; appended: number };

function decode(text: string): string {
  return decodeURIComponent(text.replace(/\+/g, ' '));
}

/** Parses `application/x-www-form-urlencoded` text into nested objects and arrays. */
export function parseForm(text: string): FormObject {
  const root: Node = { kind: 'branch', children: new Map(), appended: 0 };
  if (text.trim() === '') return {};
  for (const pair of text.split('&')) {
    if (pair === '') continue;
    const eq = pair.indexOf('=');
    let rawKey: string;
    let rawValue: string;
    try {
      rawKey = decode(eq === -1 ? pair : pair.slice(0, eq));
      rawValue = decode(eq === -1 ? '' : pair.slice(eq + 1));
    } catch {
      throw new FormError('The request body could not be decoded.', null);
    }
    const parts = splitKey(rawKey);
    if (!parts) throw new FormError(`Invalid parameter name: ${rawKey}`, rawKey);
    let node = root;
    for (let i = 0; i < parts.length; i++) {
      let part = parts[i] as string;
      if (FORBIDDEN.has(part)) throw new FormError(`Invalid parameter name: ${rawKey}`, rawKey);
      if (node.kind !== 'branch') throw new FormError(`Conflicting values for ${rawKey}`, rawKey);
      if (part === '' && i > 0) part = String(node.appended++);
      const last = i === parts.length - 1;
      const existing = node.children.get(part);
      if (last) {
        if (existing) throw new FormError(`Parameter ${rawKey} was given more than once`, rawKey);
        node.children.set(part, { kind: 'leaf', value: rawValue });
      } else if (existing) {
        if (existing.kind !== 'branch') throw new FormError(`Conflicting values for ${rawKey}`, rawKey);
        node = existing;
      } else {
        const child: Node = { kind: 'branch', children: new Map(), appended: 0 };
        node.children.set(part, child);
        node = child;
      }
    }
  }
  return build(root) as FormObject;
}

function build(node: Node): FormValue {
  if (node.kind === 'leaf') return node.value;
  const keys = [...node.children.keys()];
  const numeric = keys.length > 0 && keys.every((k) => /^(0|[1-9]\d{0,5})$/.test(k));
  if (numeric) {
    return keys
      .map(Number)
      .sort((a, b) => a - b)
      .map((k) => build(node.children.get(String(k)) as Node));
  }
  const out: FormObject = {};
  for (const key of keys) out[key] = build(node.children.get(key) as Node);
  return out;
}

/** A stable text form of parsed parameters (object keys sorted), for idempotency comparisons. */
export function canonical(value: FormValue | undefined): string {
  if (value === undefined) return 'null';
  if (typeof value === 'string') return JSON.stringify(value);
  if (Array.isArray(value)) return `[${value.map(canonical).join(',')}]`;
  const keys = Object.keys(value).sort();
  return `{${keys.map((k) => `${JSON.stringify(k)}:${canonical(value[k])}`).join(',')}}`;
}
