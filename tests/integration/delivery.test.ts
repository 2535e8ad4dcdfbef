import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import exifReader from 'exif-reader';
import { parse as parseIcc } from 'icc';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { licensedFileStream, type RightsInfo } from '~/lib/server/delivery';

let dir: string;
let original: string;

// The original's colour, as sRGB values before it is stored in Display P3.
const COLOUR = { r: 200, g: 60, b: 40 };
const MARK = { r: 0, g: 0, b: 255 };

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillmark-delivery-'));
  original = path.join(dir, 'original.jpg');
  // 1200 × 800 stored, EXIF orientation 6, in Display P3, with a blue block in the stored top-left corner.
  await sharp({ create: { width: 1200, height: 800, channels: 3, background: COLOUR } })
    .composite([{ input: { create: { width: 100, height: 100, channels: 3, background: MARK } }, top: 0, left: 0 }])
    .withMetadata({ orientation: 6 })
    .withIccProfile('p3')
    .jpeg({ quality: 100 })
    .toFile(original);
});
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

const rights: RightsInfo = {
  creator: 'Zoë Ōkubo',
  copyrightNotice: '© 2025 Zoë Ōkubo (Stillmark Studio)',
  licenceId: 'SMK-L-7Q4M-2KX9',
  licenseeName: 'Ana Ferreira & Söhne <Verlag>',
  startsOn: '2025-03-14',
  endsOn: '2027-03-13',
  usageTerms: 'One editorial article online & its social posts; no advertising, no "endorsement".\nCredit: Zoë Ōkubo.',
  webStatement: 'https://shop.example/licences/SMK-L-7Q4M-2KX9',
  licensorName: 'Stillmark Studio',
  licensorUrl: 'https://shop.example/',
};

async function deliver(name: string, info: RightsInfo = rights): Promise<string> {
  const out = path.join(dir, name);
  await pipeline(licensedFileStream(original, info), fs.createWriteStream(out));
  return out;
}

// ---------------------------------------------------------------------------------------------
// Independent readers (none of the writer's code).

/** IFD0 ASCII entries of a raw EXIF block, by tag number (TIFF 6.0 IFD layout; type 2 = ASCII). */
function ifd0Ascii(exif: Buffer): Map<number, Buffer> {
  const start = exif.subarray(0, 6).toString('latin1') === 'Exif\0\0' ? 6 : 0;
  const tiff = exif.subarray(start);
  const little = tiff.toString('latin1', 0, 2) === 'II';
  const u16 = (at: number) => (little ? tiff.readUInt16LE(at) : tiff.readUInt16BE(at));
  const u32 = (at: number) => (little ? tiff.readUInt32LE(at) : tiff.readUInt32BE(at));
  const ifd = u32(4);
  const entries = new Map<number, Buffer>();
  for (let i = 0; i < u16(ifd); i++) {
    const at = ifd + 2 + i * 12;
    if (u16(at + 2) !== 2) continue;
    const count = u32(at + 4);
    const valueAt = count <= 4 ? at + 8 : u32(at + 8);
    entries.set(u16(at), tiff.subarray(valueAt, valueAt + count));
  }
  return entries;
}

interface XmlElement {
  name: string;
  attrs: Record<string, string>;
  children: XmlElement[];
  text: string;
  /** Namespace URI of each prefix in scope. */
  ns: Record<string, string>;
}

const ENTITIES: Record<string, string> = { amp: '&', lt: '<', gt: '>', quot: '"', apos: "'" };
const unescapeXml = (s: string) =>
  s.replace(/&(#x[0-9a-f]+|#[0-9]+|[a-z]+);/gi, (_, e: string) =>
    e[0] === '#' ? String.fromCodePoint(e[1] === 'x' || e[1] === 'X' ? parseInt(e.slice(2), 16) : parseInt(e.slice(1), 10)) : ENTITIES[e]!,
  );

/** A small XML reader: elements, attributes, text, namespaces; skips processing instructions and comments. */
function parseXml(source: string): XmlElement {
  const root: XmlElement = { name: '#root', attrs: {}, children: [], text: '', ns: { xml: 'http://www.w3.org/XML/1998/namespace' } };
  const stack = [root];
  const token = /<\?[\s\S]*?\?>|<!--[\s\S]*?-->|<\/([^\s>]+)\s*>|<([^\s/>]+)((?:\s+[^\s=]+\s*=\s*(?:"[^"]*"|'[^']*'))*)\s*(\/?)>|([^<]+)/g;
  for (const m of source.matchAll(token)) {
    const top = stack[stack.length - 1]!;
    if (m[1]) {
      if (top.name !== m[1]) throw new Error(`mismatched </${m[1]}> for <${top.name}>`);
      stack.pop();
    } else if (m[2]) {
      const attrs: Record<string, string> = {};
      for (const a of m[3]!.matchAll(/([^\s=]+)\s*=\s*(?:"([^"]*)"|'([^']*)')/g)) attrs[a[1]!] = unescapeXml(a[2] ?? a[3] ?? '');
      const ns = { ...top.ns };
      for (const [k, v] of Object.entries(attrs)) if (k.startsWith('xmlns:')) ns[k.slice(6)] = v;
      const el: XmlElement = { name: m[2], attrs, children: [], text: '', ns };
      top.children.push(el);
      if (!m[4]) stack.push(el);
    } else if (m[5]) top.text += unescapeXml(m[5]);
  }
  if (stack.length !== 1) throw new Error('unclosed elements');
  return root;
}

/** Elements anywhere below `el` whose name is `localName` in namespace `uri`, whatever the prefix. */
function findAll(el: XmlElement, uri: string, localName: string): XmlElement[] {
  const found: XmlElement[] = [];
  for (const child of el.children) {
    const [prefix, local] = child.name.includes(':') ? child.name.split(':') : ['', child.name];
    if (local === localName && child.ns[prefix!] === uri) found.push(child);
    found.push(...findAll(child, uri, localName));
  }
  return found;
}

function only(el: XmlElement, uri: string, localName: string): XmlElement {
  const all = findAll(el, uri, localName);
  expect(all, `${uri}${localName}`).toHaveLength(1);
  return all[0]!;
}

// Namespace URIs: TRADE-FACTS §4.1 (dc, xmpRights, plus); RDF from the W3C RDF/XML syntax.
const RDF = 'http://www.w3.org/1999/02/22-rdf-syntax-ns#';
const DC = 'http://purl.org/dc/elements/1.1/';
const XMP_RIGHTS = 'http://ns.adobe.com/xap/1.0/rights/';
const PLUS = 'http://ns.useplus.org/ldf/xmp/1.0/';

/** The single rdf:li of a container (rdf:Seq / rdf:Alt) directly inside a property. */
function listItems(property: XmlElement, container: 'Seq' | 'Alt'): XmlElement[] {
  const [box] = property.children;
  expect(box?.name.split(':')[1]).toBe(container);
  expect(box!.ns[box!.name.split(':')[0]!]).toBe(RDF);
  return box!.children;
}

describe('licensed file', () => {
  it('is the full original, upright, as a JPEG in sRGB with the profile embedded', async () => {
    const out = await deliver('upright.jpg');
    const bytes = fs.readFileSync(out);
    expect([...bytes.subarray(0, 3)]).toEqual([0xff, 0xd8, 0xff]); // JPEG SOI + marker
    const meta = await sharp(out).metadata();
    expect(meta.format).toBe('jpeg');
    // Orientation 6 turns the 1200 × 800 stored frame to 800 × 1200 (CIPA DC-008 Orientation)
    expect([meta.width, meta.height]).toEqual([800, 1200]);
    expect(meta.orientation ?? 1).toBe(1); // already applied: viewers must not turn it again
    expect(parseIcc(meta.icc!).description).toMatch(/sRGB/);

    // Orientation 6: the stored top-left corner is shown top-right (stored row 0 is the right-hand column).
    const { data, info } = await sharp(out).raw().toBuffer({ resolveWithObject: true });
    const px = (x: number, y: number) => [...data.subarray((y * info.width + x) * info.channels, (y * info.width + x) * info.channels + 3)];
    const near = (a: number[], b: { r: number; g: number; b: number }, tolerance: number) =>
      Math.abs(a[0]! - b.r) <= tolerance && Math.abs(a[1]! - b.g) <= tolerance && Math.abs(a[2]! - b.b) <= tolerance;
    expect(near(px(760, 40), MARK, 6)).toBe(true);
    expect(near(px(40, 40), MARK, 6)).toBe(false);
    // Converted from P3 back to sRGB, not just relabelled: the colour comes back within JPEG error, and
    // is far from the numbers the original stores in P3.
    expect(near(px(400, 600), COLOUR, 4)).toBe(true);
    const stored = await sharp({ create: { width: 1, height: 1, channels: 3, background: COLOUR } }).withIccProfile('p3').raw().toBuffer();
    expect(near(px(400, 600), { r: stored[0]!, g: stored[1]!, b: stored[2]! }, 4)).toBe(false);
  });

  it('writes Artist and Copyright into EXIF IFD0 in plain ASCII (tags 0x013B and 0x8298, CIPA DC-008, TRADE-FACTS §4.2)', async () => {
    const out = await deliver('exif.jpg');
    const { exif } = await sharp(out).metadata();
    const parsed = exifReader(exif!);
    expect(parsed.Image?.Artist).toBe('Zoe Okubo');
    // The bracketed ending survives (libvips would otherwise drop a trailing "(...)")
    expect(parsed.Image?.Copyright).toBe('(C) 2025 Zoe Okubo (Stillmark Studio)');

    const ascii = ifd0Ascii(exif!);
    const artist = ascii.get(0x013b)!;
    const copyright = ascii.get(0x8298)!;
    expect(artist.toString('latin1').replace(/\0+$/, '')).toBe('Zoe Okubo');
    expect(copyright.toString('latin1').replace(/\0+$/, '')).toBe('(C) 2025 Zoe Okubo (Stillmark Studio)');
    for (const value of [artist, copyright]) expect([...value].every((b) => b === 0 || (b >= 0x20 && b <= 0x7e))).toBe(true);
  });

  it('writes the rights and the PLUS licence fields into XMP, with Unicode names intact', async () => {
    const out = await deliver('xmp.jpg');
    const { xmp } = await sharp(out).metadata();
    const doc = parseXml(xmp!.toString('utf8'));

    const creators = listItems(only(doc, DC, 'creator'), 'Seq');
    expect(creators.map((li) => li.text)).toEqual(['Zoë Ōkubo']);

    const rightsAlt = listItems(only(doc, DC, 'rights'), 'Alt');
    expect(rightsAlt).toHaveLength(1);
    expect(rightsAlt[0]!.attrs['xml:lang']).toBe('x-default');
    expect(rightsAlt[0]!.text).toBe('© 2025 Zoë Ōkubo (Stillmark Studio)');

    expect(only(doc, XMP_RIGHTS, 'Marked').text).toBe('True');
    expect(only(doc, XMP_RIGHTS, 'WebStatement').text).toBe('https://shop.example/licences/SMK-L-7Q4M-2KX9');
    const terms = listItems(only(doc, XMP_RIGHTS, 'UsageTerms'), 'Alt');
    expect(terms[0]!.attrs['xml:lang']).toBe('x-default');
    expect(terms[0]!.text).toBe(rights.usageTerms); // "&", quotes and the line break come back as written

    expect(only(doc, PLUS, 'LicenseID').text).toBe('SMK-L-7Q4M-2KX9');
    expect(only(doc, PLUS, 'LicenseStartDate').text).toBe('2025-03-14');
    expect(only(doc, PLUS, 'LicenseEndDate').text).toBe('2027-03-13');

    const [licensee] = listItems(only(doc, PLUS, 'Licensee'), 'Seq');
    expect(licensee!.attrs['rdf:parseType']).toBe('Resource');
    expect(only(licensee!, PLUS, 'LicenseeName').text).toBe('Ana Ferreira & Söhne <Verlag>');

    const [licensor] = listItems(only(doc, PLUS, 'Licensor'), 'Seq');
    expect(only(licensor!, PLUS, 'LicensorName').text).toBe('Stillmark Studio');
    expect(only(licensor!, PLUS, 'LicensorURL').text).toBe('https://shop.example/');
  });

  it('leaves out the end date when the licence has none', async () => {
    const out = await deliver('no-end.jpg', { ...rights, endsOn: null });
    const doc = parseXml((await sharp(out).metadata()).xmp!.toString('utf8'));
    expect(findAll(doc, PLUS, 'LicenseEndDate')).toHaveLength(0);
    expect(only(doc, PLUS, 'LicenseStartDate').text).toBe('2025-03-14');
  });

  it('is a stream, and reports a missing original as a stream error', async () => {
    const stream = licensedFileStream(path.join(dir, 'missing.jpg'), rights);
    expect(stream).toBeInstanceOf(Readable);
    await expect(pipeline(stream, fs.createWriteStream(path.join(dir, 'never.jpg')))).rejects.toThrow();
  });

  it('refuses an original above the pixel limit', async () => {
    const stream = licensedFileStream(original, rights, { pixelLimit: 1200 * 800 - 1 });
    await expect(pipeline(stream, fs.createWriteStream(path.join(dir, 'too-big.jpg')))).rejects.toThrow(/pixel limit/);
  });

  it('refuses bad rights before touching the file', () => {
    expect(() => licensedFileStream(original, { ...rights, webStatement: 'javascript:alert(1)' })).toThrow(/webStatement/);
    expect(() => licensedFileStream(original, { ...rights, endsOn: '2025-01-01' })).toThrow(/cannot end before it starts/);
    expect(() => licensedFileStream(original, { ...rights, creator: ' ' })).toThrow(/Creator is missing/);
  });
});
