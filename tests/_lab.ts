/** Test helpers for lab packs: a real original on disk for a work, a print offer to buy, and packs for an order. */
import fs from 'node:fs';
import path from 'node:path';
import sharp, { type Sharp } from 'sharp';
import { config } from '~/lib/server/config';
import { prepareLabPack } from '~/lib/server/lab-pack';
import { Order, OrderLine, type Work } from '~/lib/server/models';
import { Edition, Paper, PrintOffer, PrintSize } from './_fixtures';

/** Writes a JPEG original for `work` where the uploads folder keeps originals (a plain grey picture unless `make` draws one). */
export async function writeOriginal(work: Pick<Work, 'originalKey' | 'width' | 'height'>, make?: () => Sharp): Promise<string> {
  const file = path.join(config().originalsDir, path.basename(work.originalKey));
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const image = make ? make() : sharp({ create: { width: work.width, height: work.height, channels: 3, background: { r: 128, g: 128, b: 128 } } });
  await image.jpeg({ quality: 90 }).toFile(file);
  return file;
}

/** A size, paper, edition and offer for `workId` (invented rows; a limited edition when `total` is given). */
export async function makeOffer(workId: number, size: { slug: string; label: string; unit: 'mm' | 'in'; width: number; height: number }, total: number | null = null) {
  const printSize = (await PrintSize.findOne({ where: { slug: size.slug } }))
    ?? (await PrintSize.create({ ...size, family: size.unit === 'mm' ? 'iso-a' : 'inch', basePrice: 5000 }));
  const paper = (await Paper.findOne({ where: { slug: 'test-cotton' } }))
    ?? (await Paper.create({ slug: 'test-cotton', name: 'Test cotton rag', surface: 'matte', weightGsm: 310, surchargeBp: 0, description: '' }));
  const edition = await Edition.create({ workId, printSizeId: printSize.id, kind: total ? 'limited' : 'open', total });
  return PrintOffer.create({ workId, printSizeId: printSize.id, paperId: paper.id, editionId: edition.id, priceOverride: null });
}

/** Prepares the lab pack of every print line of the order that still needs one, as `actor`. */
export async function preparePacks(number: string, actor = { id: 'u-admin', email: 'admin@example.com' }): Promise<void> {
  const order = (await Order.findOne({ where: { number } }))!;
  const lines = await OrderLine.findAll({ where: { orderId: order.id, kind: 'print' } });
  for (const line of lines) {
    if (line.refunded >= line.subtotal) continue;
    await prepareLabPack(number, String(line.id), actor);
  }
}
