/**
 * The lab job sheet (pdf-lib): one A4 page that goes to the lab with a print file — order, work, print
 * size in both units, paper, fill or fit, the crop in original pixels, the file's pixel size, ppi and
 * name, the edition number and certificate serial, where it ships, and a small preview of the file.
 * Set like the certificates (same faces, palette and layout helpers).
 */
import type { ShippingAddress } from '../checkout';
import { countryName } from '../checkout';
import { formatCount, formatDimensions, formatLongDate } from '../certificate-text';
import { LAB_FORMAT_LABEL, type LabFormat, type LabPlan } from '../lab-pack';
import type { PrintMode } from '../print-grade';
import { INK_SOFT, RULE, SHEET_MARGIN, SHEET_SCALES, ShopSheet, newShopDocument, pdfLine, shopHeader, type TextStyle } from './certificates';

export interface JobSheetData {
  shopName: string;
  orderNumber: string;
  lineId: number;
  workTitle: string;
  workSlug: string;
  size: { label: string; width: number; height: number; unit: 'mm' | 'in' };
  paper: { name: string; weightGsm: number | null } | null;
  mode: PrintMode;
  quantity: number;
  /** The original's upright pixel size. */
  original: { width: number; height: number };
  plan: LabPlan;
  /** Where the crop came from, in words (e.g. "as bought"). */
  cropNote: string;
  file: { name: string; ppi: number; format: LabFormat; bytes: number };
  edition: { kind: 'open' } | { kind: 'limited'; total: number; numbers: { number: number; serial: string | null; state: string }[] } | null;
  shipTo: ShippingAddress | null;
  preparedAt: Date;
  preparedBy: string;
  /** A small JPEG of the print file, drawn on the sheet. */
  preview: Uint8Array;
}

/** Least room kept for the preview, in pt. */
const MIN_PREVIEW = 150;
const MAX_PREVIEW = 260;

function megabytes(bytes: number): string {
  return `${(bytes / 1_000_000).toFixed(bytes < 10_000_000 ? 2 : 1)} MB`;
}

function editionText(d: JobSheetData): string {
  if (!d.edition) return 'Not recorded';
  if (d.edition.kind === 'open') return 'Open edition (not numbered)';
  const total = d.edition.total;
  if (d.edition.numbers.length === 0) return `Limited edition of ${total}: no number assigned yet`;
  return d.edition.numbers
    .map((n) => `${n.number}/${total}${n.serial ? `, certificate ${n.serial}` : ', no certificate yet'}${n.state === 'sold' ? '' : ` (${n.state})`}`)
    .join('; ');
}

function shipText(a: ShippingAddress | null): string {
  if (!a) return 'No address on the order';
  return [a.name, a.line1, a.line2, `${a.city} ${a.postalCode}`, countryName(a.country)].filter((s) => s && s.trim()).join(', ');
}

function modeText(d: JobSheetData): string {
  if (d.mode === 'fill') return 'Fill: the picture is cropped to cover the whole sheet; no border.';
  const { left, right, top, bottom } = d.plan.border;
  const inches = (px: number) => `${(px / d.file.ppi).toFixed(2)} in`;
  const pair = (sides: string, a: number, b: number) =>
    a === 0 && b === 0 ? `none ${sides}` : a === b ? `${a} px (${inches(a)}) ${sides} each` : `${a} and ${b} px (${inches(a)}) ${sides}`;
  return `Fit: the whole picture centred on white. Border: ${pair('left and right', left, right)}; ${pair('top and bottom', top, bottom)}.`;
}

/** "A4: 210 × 297 mm (8.27 × 11.69 in)", or just the dimensions when the label already is them. */
function sizeText(size: JobSheetData['size']): string {
  const dims = formatDimensions(size.width, size.height, size.unit);
  const flat = (t: string) => t.replace(/\s+/g, ' ').trim().toLowerCase();
  return dims.toLowerCase().startsWith(flat(size.label)) ? dims : `${size.label}: ${dims}`;
}

function rows(d: JobSheetData): [string, string][] {
  const { plan } = d;
  const c = plan.crop;
  const orientation = plan.sheet.width > plan.sheet.height ? 'landscape' : plan.sheet.width < plan.sheet.height ? 'portrait' : 'square';
  const cropText =
    d.mode === 'fill'
      ? `Left ${formatCount(c.left)}, top ${formatCount(c.top)}, ${formatCount(c.width)} × ${formatCount(c.height)} px of the ${formatCount(d.original.width)} × ${formatCount(d.original.height)} px original (${d.cropNote}).`
      : `The whole original, ${formatCount(d.original.width)} × ${formatCount(d.original.height)} px, placed at x ${plan.placement.left}, y ${plan.placement.top}, ${formatCount(plan.placement.width)} × ${formatCount(plan.placement.height)} px on the sheet.`;
  const effective = d.mode === 'fill' ? Math.min(plan.sheet.width / c.width, plan.sheet.height / c.height) : plan.placement.width / c.width;
  return [
    ['Order', `${d.orderNumber}, line ${d.lineId}`],
    ['Work', `“${d.workTitle}” (${d.workSlug})`],
    ['Print size', `${sizeText(d.size)}, ${orientation}${plan.sheet.turned ? ' (turned to the picture)' : ''}`],
    ['Paper', d.paper ? [d.paper.name, d.paper.weightGsm ? `${d.paper.weightGsm} gsm` : null].filter(Boolean).join(', ') : 'Not recorded'],
    ['Quantity', d.quantity === 1 ? '1 print' : `${d.quantity} prints`],
    ['Fill or fit', modeText(d)],
    ['Crop', cropText],
    ['File', d.file.name],
    [
      'Pixels',
      `${formatCount(plan.sheet.width)} × ${formatCount(plan.sheet.height)} px at ${d.file.ppi} ppi (sheet size exactly); original scaled ${effective >= 1 ? 'up' : 'down'} ${effective.toFixed(3)}×`,
    ],
    ['Format', `${LAB_FORMAT_LABEL[d.file.format]}, sRGB (IEC 61966-2-1) profile embedded, ${megabytes(d.file.bytes)}`],
    ['Edition', editionText(d)],
    ['Ship to', shipText(d.shipTo)],
    ['Prepared', `${formatLongDate(d.preparedAt)}, ${d.preparedAt.toISOString().slice(11, 16)} UTC, by ${d.preparedBy}`],
  ];
}

function page(sheet: ShopSheet, d: JobSheetData): void {
  shopHeader(sheet, d.shopName, 'Lab job sheet', `“${pdfLine(d.workTitle)}”`, pdfLine(`Order ${d.orderNumber} · line ${d.lineId} · ${d.size.label}, ${d.mode === 'fill' ? 'fill' : 'fit'}`));
  sheet.facts(rows(d).map(([label, value]) => [label, pdfLine(value)] as const));
}

/** The job sheet as PDF bytes. */
export async function jobSheetPdf(d: JobSheetData): Promise<Uint8Array> {
  const { doc, faces } = await newShopDocument({
    title: `Lab job sheet ${d.orderNumber} line ${d.lineId}`,
    subject: `“${d.workTitle}”, ${d.size.label}, ${d.mode}, ${d.plan.sheet.width} × ${d.plan.sheet.height} px at ${d.file.ppi} ppi`,
    author: d.shopName,
    keywords: [d.orderNumber, d.file.name, d.size.label, ...(d.edition?.kind === 'limited' ? d.edition.numbers.map((n) => n.serial ?? '').filter(Boolean) : [])],
    issuedAt: d.preparedAt,
  });
  doc.setProducer('Stillmark lab pack (pdf-lib)');
  const scale =
    SHEET_SCALES.find((k) => {
      const dry = new ShopSheet(doc, faces, { scale: k, dry: true });
      page(dry, d);
      return dry.y - dry.bottom >= MIN_PREVIEW + 30;
    }) ?? SHEET_SCALES[SHEET_SCALES.length - 1];
  const sheet = new ShopSheet(doc, faces, { scale });
  page(sheet, d);

  // The preview, as large as the room left allows, with a hairline round the sheet's edge.
  const image = await doc.embedJpg(d.preview);
  const room = Math.min(MAX_PREVIEW, sheet.y - sheet.bottom - 34);
  const ratio = image.width / image.height;
  let h = Math.max(40, room);
  let w = h * ratio;
  if (w > sheet.width) {
    w = sheet.width;
    h = w / ratio;
  }
  const y = sheet.y - 18 - h;
  sheet.page!.drawImage(image, { x: SHEET_MARGIN, y, width: w, height: h });
  sheet.page!.drawRectangle({ x: SHEET_MARGIN, y, width: w, height: h, borderColor: RULE, borderWidth: 0.75 });
  const caption: TextStyle = { face: faces.sans, size: 7.5, color: INK_SOFT };
  const captionText = pdfLine(`Preview of the print file, the whole sheet (${formatCount(d.plan.sheet.width)} × ${formatCount(d.plan.sheet.height)} px); the hairline marks the sheet's edge.`);
  sheet.draw(sheet.fit(captionText, sheet.width, caption), SHEET_MARGIN, y - 12, caption);
  sheet.finish();
  return doc.save();
}
