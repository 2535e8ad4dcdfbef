import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { APIContext } from 'astro';
import { POST } from '~/pages/api/cart/quote';
import type { CartQuote, QuotedLineOk } from '~/lib/cart';
import {
  Edition, LicenceTier, Paper, PrintOffer, PrintSize, WorkLicencePrice,
  insertSettings, insertWork, useTempDatabase, type TestData,
} from '../_fixtures';

let data: TestData;
const ids: Record<string, number> = {};

async function quote(body: unknown, contentType = 'application/json'): Promise<Response> {
  const request = new Request('http://localhost/api/cart/quote', {
    method: 'POST',
    headers: { 'Content-Type': contentType },
    body: typeof body === 'string' ? body : JSON.stringify(body),
  });
  return POST({ request } as APIContext);
}

beforeAll(async () => {
  data = await useTempDatabase();
  await insertSettings();
  const big = await insertWork('big', 6000, 4000);
  const small = await insertWork('small', 2400, 1600);
  const draft = await insertWork('draft', 6000, 4000, { status: 'draft', publishedAt: null });
  const editorial = await LicenceTier.create({ slug: 'ed', name: 'Editorial test', use: 'editorial', summary: '', terms: 't', media: 'web', cap: 1000, capUnit: 'views', territory: 'Worldwide', termMonths: 12, defaultPrice: 12000 });
  const commercial = await LicenceTier.create({ slug: 'co', name: 'Commercial test', use: 'commercial', summary: '', terms: 't', media: 'ads', cap: null, capUnit: null, territory: 'UK', termMonths: 12, defaultPrice: 45000 });
  await WorkLicencePrice.create({ workId: small.id, licenceTierId: editorial.id, mode: 'override', price: 9900 });
  await WorkLicencePrice.create({ workId: small.id, licenceTierId: commercial.id, mode: 'withdrawn', price: null });
  const s8x10 = await PrintSize.create({ slug: '8x10', label: '8 × 10 in', family: 'inch', unit: 'in', width: 8, height: 10, basePrice: 6000 });
  const s16x20 = await PrintSize.create({ slug: '16x20', label: '16 × 20 in', family: 'inch', unit: 'in', width: 16, height: 20, basePrice: 18000 });
  const cotton = await Paper.create({ slug: 'cotton', name: 'Cotton', surface: 'matte', weightGsm: 310, surchargeBp: 0, description: '' });
  const baryta = await Paper.create({ slug: 'baryta', name: 'Baryta', surface: 'satin', weightGsm: 315, surchargeBp: 1500, description: '' });
  const offer = async (workId: number, size: PrintSize, paper: Paper, limited?: number) => {
    const edition = (await Edition.findOne({ where: { workId, printSizeId: size.id } })) ??
      (await Edition.create(limited ? { workId, printSizeId: size.id, kind: 'limited', total: limited } : { workId, printSizeId: size.id, kind: 'open', total: null }));
    return (await PrintOffer.create({ workId, printSizeId: size.id, paperId: paper.id, editionId: edition.id, priceOverride: null })).id;
  };
  Object.assign(ids, {
    big: big.id, small: small.id, draft: draft.id, editorial: editorial.id, commercial: commercial.id,
    big8x10Cotton: await offer(big.id, s8x10, cotton),
    big8x10Baryta: await offer(big.id, s8x10, baryta),
    big16x20Baryta: await offer(big.id, s16x20, baryta, 5),
    small8x10Cotton: await offer(small.id, s8x10, cotton),
    small16x20Cotton: await offer(small.id, s16x20, cotton, 25),
    draft8x10: await offer(draft.id, s8x10, cotton),
  });
});

afterAll(async () => data.cleanup());

describe('POST /api/cart/quote', () => {
  it('prices licences from the tier, the work override, and refuses a withdrawn tier', async () => {
    const res = await quote({ lines: [
      { kind: 'licence', workId: ids.big, tierId: ids.editorial },
      { kind: 'licence', workId: ids.small, tierId: ids.editorial },
      { kind: 'licence', workId: ids.small, tierId: ids.commercial },
    ] });
    expect(res.status).toBe(200);
    const body = (await res.json()) as CartQuote;
    const [def, override, withdrawn] = body.lines;
    // business rule (PRODUCT.md): a work's override replaces the tier's default; withdrawn is not for sale
    expect(def).toMatchObject({ ok: true, unitPrice: 12000, subtotal: 12000 });
    expect(override).toMatchObject({ ok: true, unitPrice: 9900 });
    expect(withdrawn).toMatchObject({ ok: false });
    expect(withdrawn!.ok === false && withdrawn!.error).toMatch(/not available/);
    expect(body.total).toBe(21900);
    expect(body.currency).toBe('GBP');
  });

  it('prices prints from size, paper and edition, and multiplies by quantity', async () => {
    const res = await quote({ lines: [
      { kind: 'print', offerId: ids.big8x10Cotton, mode: 'fill', quantity: 3 },
      { kind: 'print', offerId: ids.big8x10Baryta, mode: 'fit', quantity: 1 },
      { kind: 'print', offerId: ids.big16x20Baryta, mode: 'fill', quantity: 1 },
    ] });
    const body = (await res.json()) as CartQuote;
    const [a, b, c] = body.lines as QuotedLineOk[];
    // business rule (PRODUCT.md): base × (1 + paper surcharge) × (1 + limited-edition premium), integer minor units
    expect(a).toMatchObject({ ok: true, unitPrice: 6000, quantity: 3, subtotal: 18000 });
    expect(b).toMatchObject({ ok: true, unitPrice: 6900 }); // 6000 + 15 %
    expect(c).toMatchObject({ ok: true, unitPrice: 24840 }); // 18000 + 15 % = 20700, + 20 % = 24840
    expect(body.subtotal).toBe(18000 + 6900 + 24840);
    expect(body.total).toBe(body.subtotal);
    expect(body.itemCount).toBe(5);
    // 6000×4000 on 8×10 in, fill: 500 ppi, Crisp (TRADE-FACTS §2.4 worked example)
    expect(a.detail).toMatch(/Crisp, 500 ppi/);
  });

  it('sells the small file at 8×10 as Wall and refuses 16×20 as too small', async () => {
    const res = await quote({ lines: [
      { kind: 'print', offerId: ids.small8x10Cotton, mode: 'fill', quantity: 1 },
      { kind: 'print', offerId: ids.small16x20Cotton, mode: 'fill', quantity: 1 },
    ] });
    const body = (await res.json()) as CartQuote;
    // 2400×1600 px on 10×8 in: min(240, 200) = 200 ppi; eye needs 179 ppi at 1.5 × 12.8 in (1′ acuity, TRADE-FACTS §1.2)
    expect(body.lines[0]).toMatchObject({ ok: true });
    expect((body.lines[0] as QuotedLineOk).detail).toMatch(/Wall, 200 ppi/);
    // 16×20 in: 100 ppi, under the 150 ppi wall floor
    expect(body.lines[1]).toMatchObject({ ok: false });
    expect(body.lines[1]!.ok === false && body.lines[1]!.error).toMatch(/too small.*100 ppi/);
    expect(body.total).toBe(6000);
  });

  it('refuses unpublished works, unknown offers and editions smaller than the quantity', async () => {
    const res = await quote({ lines: [
      { kind: 'print', offerId: ids.draft8x10, mode: 'fill', quantity: 1 },
      { kind: 'print', offerId: 999999, mode: 'fill', quantity: 1 },
      { kind: 'licence', workId: ids.draft, tierId: ids.editorial },
      { kind: 'print', offerId: ids.big16x20Baryta, mode: 'fit', quantity: 6 },
    ] });
    const body = (await res.json()) as CartQuote;
    expect(body.lines.map((l) => l.ok)).toEqual([false, false, false, false]);
    expect(body.lines[3]!.ok === false && body.lines[3]!.error).toMatch(/only 5 prints/);
    expect(body.total).toBe(0);
  });

  it('never reads a price the client sends', async () => {
    const res = await quote({ lines: [{ kind: 'licence', workId: ids.big, tierId: ids.editorial, price: 1, unitPrice: 1 }], total: 1 });
    const body = (await res.json()) as CartQuote;
    expect(body.lines[0]).toMatchObject({ ok: true, unitPrice: 12000 });
    expect(body.total).toBe(12000);
  });

  it('answers malformed bodies with a 400 that names the field', async () => {
    const missing = await quote({ lines: [{ kind: 'print', offerId: ids.big8x10Cotton, quantity: 1 }] });
    expect(missing.status).toBe(400);
    const body = await missing.json();
    expect(body.error.code).toBe('invalid_cart');
    expect(Object.keys(body.error.fields)).toContain('lines.0.mode');

    const badQuantity = await quote({ lines: [{ kind: 'print', offerId: ids.big8x10Cotton, mode: 'fill', quantity: 0 }] });
    expect(badQuantity.status).toBe(400);
    expect(Object.keys((await badQuantity.json()).error.fields)).toContain('lines.0.quantity');

    const twice = { kind: 'licence', workId: ids.big, tierId: ids.editorial };
    const duplicate = await quote({ lines: [twice, twice] });
    expect(duplicate.status).toBe(400);
    expect(Object.keys((await duplicate.json()).error.fields)).toContain('lines.1');

    const notJson = await quote('{"lines": [', 'application/json');
    expect(notJson.status).toBe(400);
    expect((await notJson.json()).error.code).toBe('invalid_json');

    const wrongType = await quote('lines=1', 'application/x-www-form-urlencoded');
    expect(wrongType.status).toBe(415);

    const tooMany = await quote({ lines: Array.from({ length: 51 }, (_, i) => ({ kind: 'licence', workId: i + 1, tierId: 1 })) });
    expect(tooMany.status).toBe(400);
  });
});
