/**
 * Cross-site scripting probes shared by the integration and browser tests (no server code imported).
 * Vectors from the OWASP XSS Filter Evasion and XSS Prevention cheat sheets: a script element, breaking
 * out of a quoted attribute into an element with an event handler, a `javascript:` URL, closing a
 * <textarea> (RCDATA) early, an SVG onload, and Unicode look-alikes (U+202E RIGHT-TO-LEFT OVERRIDE,
 * FULLWIDTH LESS-THAN SIGN U+FF1C, ZERO WIDTH SPACE U+200B) that a careless NFKC step would turn into markup.
 */

export const VECTORS = {
  script: '<script>alert(1)</script>',
  attribute: '"><img src=x onerror=alert(1)>',
  url: 'javascript:alert(1)',
  textarea: '</textarea><script>alert(1)</script>',
  svg: "'><svg onload=alert(1)>",
  unicode: '\u202e\uff1cscript\uff1ealert(1)\uff1c/script\uff1e\u200b',
} as const;

/** For fields of up to 80 characters (shop name, tier and paper names, address lines). */
export const SHORT = `${VECTORS.attribute}${VECTORS.script}`; // 55 characters
/** For keywords (at most 40 characters each). */
export const KEYWORDS = [VECTORS.script, VECTORS.attribute, VECTORS.url];
/** For long fields (captions, messages, alt text): every vector. */
export const LONG = Object.values(VECTORS).join(' ');
/** Licence terms may not contain < or > (settings-schemas): the vectors that survive that rule. */
export const NO_ANGLES = `${VECTORS.url} " ' & onerror=alert(1) \u202e\uff1cscript\uff1e`;

/** Markup the vectors would create if a page or mail let them through unescaped. */
export const RAW_MARKUP = [VECTORS.script, '<img src=x onerror=alert(1)>', '<svg onload=alert(1)>', '</textarea><script>'];

/** How an HTML escaper that handles & < > " ' writes the script vector (OWASP XSS Prevention, rule #1). */
export const ESCAPED_SCRIPT = '&lt;script&gt;alert(1)&lt;/script&gt;';

export interface Tag { name: string; attributes: { name: string; value: string }[] }

const START_TAG = /<([a-zA-Z][\w:-]*)((?:\s+[^\s"'>/=]+(?:\s*=\s*(?:"[^"]*"|'[^']*'|[^\s"'=<>`]+))?)*)\s*\/?>/y;
/** Elements whose content is not markup (HTML Living Standard §13.1.2: raw text and escapable raw text). */
const RAW_TEXT = ['script', 'style', 'textarea', 'title'];

/**
 * Reads an HTML document as a browser's tokenizer would for what matters here: start tags with their
 * attributes (quoted values may hold < and >), and the text of script elements. The content of raw-text
 * elements is skipped up to their end tag, so a payload that closes a <textarea> early shows up as tags.
 */
export function scanHtml(html: string): { tags: Tag[]; scripts: { attributes: Tag['attributes']; body: string }[] } {
  const tags: Tag[] = [];
  const scripts: { attributes: Tag['attributes']; body: string }[] = [];
  const lower = html.toLowerCase();
  let at = 0;
  while (at < html.length) {
    const lt = html.indexOf('<', at);
    if (lt < 0) break;
    START_TAG.lastIndex = lt;
    const m = START_TAG.exec(html);
    if (!m) {
      at = lt + 1;
      continue;
    }
    const name = m[1]!.toLowerCase();
    const attributes = [...m[2]!.matchAll(/([^\s"'>/=]+)(?:\s*=\s*(?:"([^"]*)"|'([^']*)'|([^\s"'=<>`]+)))?/g)].map((a) => ({
      name: a[1]!.toLowerCase(),
      value: a[2] ?? a[3] ?? a[4] ?? '',
    }));
    tags.push({ name, attributes });
    at = START_TAG.lastIndex;
    if (RAW_TEXT.includes(name)) {
      const close = lower.indexOf(`</${name}`, at);
      const stop = close < 0 ? html.length : close;
      if (name === 'script') scripts.push({ attributes, body: html.slice(at, stop) });
      at = stop;
    }
  }
  return { tags, scripts };
}

export function startTags(html: string): Tag[] {
  return scanHtml(html).tags;
}

/**
 * What an injected payload would look like in an HTML document: an element outside `allowedTags` (when
 * given), any event-handler attribute, a link or source with a script-capable scheme, the probes' own
 * `<img src=x>`, and a script element that calls alert.
 */
export function dangerousMarkup(html: string, allowedTags?: readonly string[]): string[] {
  const found: string[] = [];
  const { tags, scripts } = scanHtml(html);
  for (const tag of tags) {
    if (allowedTags && !allowedTags.includes(tag.name)) found.push(`<${tag.name}>`);
    for (const a of tag.attributes) {
      if (a.name.startsWith('on')) found.push(`<${tag.name} ${a.name}>`);
      const value = decodeEntities(a.value).trim();
      if (['href', 'src', 'action', 'formaction', 'xlink:href'].includes(a.name) && /^(javascript|vbscript|data):/i.test(value) && !/^data:image\//i.test(value)) {
        found.push(`<${tag.name} ${a.name}="${a.value}">`);
      }
      if (tag.name === 'img' && a.name === 'src' && value === 'x') found.push('<img src=x>');
    }
  }
  for (const script of scripts) if (/alert\(/.test(script.body)) found.push(`<script>${script.body.slice(0, 40)}</script>`);
  return found;
}

/** Decodes the named and numeric character references an attribute value may hide a scheme behind. */
export function decodeEntities(value: string): string {
  const named: Record<string, string> = { amp: '&', lt: '<', gt: '>', quot: '"', apos: "'", colon: ':', tab: '\t', newline: '\n' };
  return value.replace(/&(#x[0-9a-f]+|#\d+|[a-z]+);?/gi, (whole, e: string) => {
    if (e[0] === '#') return String.fromCodePoint(e[1] === 'x' || e[1] === 'X' ? parseInt(e.slice(2), 16) : parseInt(e.slice(1), 10));
    return named[e.toLowerCase()] ?? whole;
  });
}
