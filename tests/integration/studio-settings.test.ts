import fs from 'node:fs';
import path from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { APIContext } from 'astro';
import * as settingsRoute from '~/pages/api/studio/settings';
import * as rebuildRoute from '~/pages/api/studio/settings/rebuild';
import * as tiersRoute from '~/pages/api/studio/tiers/index';
import * as tierRoute from '~/pages/api/studio/tiers/[id]';
import * as papersRoute from '~/pages/api/studio/papers/index';
import * as paperRoute from '~/pages/api/studio/papers/[id]';
import * as sizesRoute from '~/pages/api/studio/sizes/index';
import * as sizeRoute from '~/pages/api/studio/sizes/[id]';
import type { SessionUser } from '~/lib/server/auth-types';
import { config } from '~/lib/server/config';
import { FORMATS, EXTENSION, makeDerivatives, sha256File, storeOriginal } from '~/lib/server/images';
import { quoteCart } from '~/lib/server/quote';
import { slugify, waitForPreviewRebuild } from '~/lib/server/settings';
import { isoA } from '~/lib/paper-sizes';
import { isKnownCurrency, shopSettingsInput, type RebuildProgress, type SettingsSaved, type ShopSettingsView } from '~/lib/settings-schemas';
import type { QuotedLineOk } from '~/lib/cart';
import {
  Edition, LicenceTier, Paper, PrintOffer, PrintSize, Work, WorkLicencePrice,
  insertSettings, insertWork, useTempDatabase, type TestData,
} from '../_fixtures';

type Role = SessionUser['role'];
const person = (role: Role): SessionUser => ({ id: `u-${role}`, email: `${role}@example.test`, name: role, role, emailVerified: true });
const photographer = person('photographer');

type Handler = (context: APIContext) => Promise<Response> | Response;

/** Calls a handler as Astro would: `{ params, request, locals: { user, session } }`. */
function call(handler: Handler, opts: { id?: number | string; body?: unknown; method?: string; user?: SessionUser | null } = {}) {
  const url = new URL(`http://localhost/api/studio/x${opts.id != null ? `/${opts.id}` : ''}`);
  const init: RequestInit = { method: opts.method ?? (opts.body === undefined ? 'GET' : 'POST') };
  if (opts.body !== undefined) {
    init.headers = { 'Content-Type': 'application/json' };
    init.body = typeof opts.body === 'string' ? opts.body : JSON.stringify(opts.body);
  }
  const user = opts.user === undefined ? photographer : opts.user;
  const context = { params: opts.id != null ? { id: String(opts.id) } : {}, request: new Request(url, init), url, locals: { user, session: null } };
  return handler(context as unknown as APIContext);
}

let data: TestData;
const ids: Record<string, number> = {};

async function currentSettings(): Promise<ShopSettingsView> {
  const res = await call(settingsRoute.GET);
  expect(res.status).toBe(200);
  return (await res.json()).settings;
}

async function putSettings(change: Partial<ShopSettingsView>, user?: SessionUser | null): Promise<Response> {
  return call(settingsRoute.PUT, { method: 'PUT', body: { ...(await currentSettings()), ...change }, user });
}

const terms = 'You may use the picture in one article online; no advertising, no endorsement.';
const tierBody = (name: string, extra: Record<string, unknown> = {}) => ({
  name, use: 'editorial', summary: 'One article.', terms, media: 'Web (editorial)', cap: 100000, capUnit: 'page views',
  territory: 'Worldwide', termMonths: 12, defaultPrice: 12000, active: true, ...extra,
});
const paperBody = (name: string, extra: Record<string, unknown> = {}) => ({
  name, surface: 'Matte', weightGsm: 310, surchargeBp: 0, description: '', active: true, ...extra,
});
const sizeBody = (label: string, extra: Record<string, unknown> = {}) => ({
  label, family: 'inch', unit: 'in', width: 11, height: 14, basePrice: 9000, active: true, ...extra,
});

/** The grade text the quote gives a fill print of the small work at 8×10 in. */
async function smallWorkGrade(): Promise<string> {
  const quote = await quoteCart([{ kind: 'print', offerId: ids.small8x10, mode: 'fill', quantity: 1 }]);
  const line = quote.lines[0] as QuotedLineOk;
  expect(line.ok).toBe(true);
  return line.detail;
}

beforeAll(async () => {
  data = await useTempDatabase();
  await insertSettings();
  // Invented test rows (not expected values): one small work offered at 8×10 in on one paper.
  const small = await insertWork('small', 2400, 1600);
  const size = await PrintSize.create({ slug: '8x10', label: '8 × 10 in', family: 'inch', unit: 'in', width: 8, height: 10, basePrice: 6000 });
  const paper = await Paper.create({ slug: 'cotton', name: 'Cotton', surface: 'matte', weightGsm: 310, surchargeBp: 0, description: '' });
  const edition = await Edition.create({ workId: small.id, printSizeId: size.id, kind: 'open', total: null });
  const offer = await PrintOffer.create({ workId: small.id, printSizeId: size.id, paperId: paper.id, editionId: edition.id, priceOverride: null });
  Object.assign(ids, { small: small.id, size8x10: size.id, cotton: paper.id, small8x10: offer.id });
});

afterAll(async () => {
  await waitForPreviewRebuild();
  await data.cleanup();
});

describe('settings schema', () => {
  it('refuses a target below the floor, naming the field', async () => {
    const res = await putSettings({ targetPpi: 200, floorPpi: 240 });
    expect(res.status).toBe(400);
    const body = await res.json();
    expect(body.error.code).toBe('invalid_settings');
    expect(Object.keys(body.error.fields)).toEqual(expect.arrayContaining(['targetPpi', 'floorPpi']));
    expect(body.error.fields.targetPpi).toMatch(/at least the floor \(240 ppi\)/);
  });

  it('refuses a wall floor above the floor, and ppi outside 50–1200', async () => {
    const wall = await putSettings({ wallFloorPpi: 250 });
    expect(wall.status).toBe(400);
    expect(Object.keys((await wall.json()).error.fields)).toContain('wallFloorPpi');
    const low = await putSettings({ wallFloorPpi: 49 });
    expect(Object.keys((await low.json()).error.fields)).toContain('wallFloorPpi');
    const fractional = await putSettings({ targetPpi: 300.5 });
    expect(Object.keys((await fractional.json()).error.fields)).toContain('targetPpi');
  });

  it('refuses a currency code Intl does not know, or not in capitals', async () => {
    for (const currency of ['XYZ', 'gbp', 'POUND', '']) {
      const res = await putSettings({ currency });
      expect(res.status, currency).toBe(400);
      expect(Object.keys((await res.json()).error.fields)).toContain('currency');
    }
    // ISO 4217: GBP, EUR, JPY are codes; the Intl runtime lists them (TRADE-FACTS §3.3)
    expect(['GBP', 'EUR', 'JPY', 'KWD'].every(isKnownCurrency)).toBe(true);
  });

  it('answers a body that is not JSON with 400 and a wrong content type with 415', async () => {
    expect((await call(settingsRoute.PUT, { method: 'PUT', body: '{"shopName": ' })).status).toBe(400);
    const form = await settingsRoute.PUT({
      request: new Request('http://localhost/api/studio/settings', { method: 'PUT', headers: { 'Content-Type': 'text/plain' }, body: 'x' }),
      locals: { user: photographer, session: null },
      params: {},
    } as unknown as APIContext);
    expect(form.status).toBe(415);
  });

  it('the shared schema checks the form the same way', () => {
    const ok = shopSettingsInput.safeParse({
      shopName: ' Shop ', photographerName: 'P', tagline: '', currency: 'EUR', targetPpi: 300, floorPpi: 240, wallFloorPpi: 150,
      viewingDistanceFactor: 1.5, watermarkText: 'mark', limitedEditionPremiumBp: 0,
    });
    expect(ok.success && ok.data.shopName).toBe('Shop');
  });
});

describe('grade thresholds', () => {
  it('changes a work’s grade in the quote as soon as they are saved, with no job', async () => {
    // 2400×1600 px on 8×10 in, fill: paper turned to 10×8, min(2400/10, 1600/8) = 200 ppi (TRADE-FACTS §2.3)
    // eye at 1.5 × √(10² + 8²) = 19.2 in needs 3437.75 / 19.2 = 179 ppi (TRADE-FACTS §1.2, 1 arcminute acuity)
    // defaults 300/240/150: 200 < 240 floor, 200 ≥ max(179, 150) → Wall (PRODUCT.md grade rules)
    expect(await smallWorkGrade()).toMatch(/Wall, 200 ppi/);

    const res = await putSettings({ floorPpi: 200 });
    expect(res.status).toBe(200);
    const saved = (await res.json()) as SettingsSaved;
    expect(saved.settings.floorPpi).toBe(200);
    expect(saved.rebuild).toBeNull();
    expect(saved.warnings).toEqual([]);
    // 200 ≥ floor 200 → Fine (PRODUCT.md grade rules)
    expect(await smallWorkGrade()).toMatch(/Fine, 200 ppi/);

    // target 200 as well: 200 ≥ target → Crisp (PRODUCT.md grade rules)
    await putSettings({ targetPpi: 200 });
    expect(await smallWorkGrade()).toMatch(/Crisp, 200 ppi/);

    // a wall floor above 200 (with the floor above it too): 200 < 210 → Too small, refused by the quote
    await putSettings({ targetPpi: 300, floorPpi: 240, wallFloorPpi: 210 });
    const quote = await quoteCart([{ kind: 'print', offerId: ids.small8x10, mode: 'fill', quantity: 1 }]);
    expect(quote.lines[0]!.ok).toBe(false);

    await putSettings({ targetPpi: 300, floorPpi: 240, wallFloorPpi: 150 });
    expect(await smallWorkGrade()).toMatch(/Wall, 200 ppi/);
  });
});

describe('currency', () => {
  it('allows a new currency but warns that prices are not converted', async () => {
    const res = await putSettings({ currency: 'JPY' });
    expect(res.status).toBe(200);
    const saved = (await res.json()) as SettingsSaved;
    expect(saved.settings.currency).toBe('JPY');
    expect(saved.warnings).toHaveLength(1);
    expect(saved.warnings[0]!.code).toBe('currency_not_converted');
    // ISO 4217 minor units: GBP has 2 digits, JPY 0, so 12500 minor units are £125.00 and ¥12,500 (TRADE-FACTS §3.3)
    expect(saved.warnings[0]!.message).toContain('£125.00');
    expect(saved.warnings[0]!.message).toContain('¥12,500');
    // the stored price is the same integer as before
    expect((await PrintSize.findByPk(ids.size8x10))!.basePrice).toBe(6000);
    const back = (await (await putSettings({ currency: 'GBP' })).json()) as SettingsSaved;
    expect(back.settings.currency).toBe('GBP');
  });
});

describe('licence tiers', () => {
  it('creates, lists, changes and deletes a tier; slugs come from names and stay unique', async () => {
    const created = await call(tiersRoute.POST, { body: tierBody('Editorial · Digital') });
    expect(created.status).toBe(201);
    const { tier } = await created.json();
    expect(tier).toMatchObject({ slug: 'editorial-digital', name: 'Editorial · Digital', active: true, defaultPrice: 12000 });

    const clash = await call(tiersRoute.POST, { body: tierBody('editorial · digital') });
    expect(clash.status).toBe(409);
    expect(Object.keys((await clash.json()).error.fields)).toContain('name');

    const twin = await call(tiersRoute.POST, { body: tierBody('Editorial — Digital') });
    expect(twin.status).toBe(201);
    expect((await twin.json()).tier.slug).toBe('editorial-digital-2');

    const list = await (await call(tiersRoute.GET)).json();
    expect(list.tiers.map((t: { name: string }) => t.name)).toEqual(['Editorial · Digital', 'Editorial — Digital']);

    const changed = await call(tierRoute.PATCH, { id: tier.id, method: 'PATCH', body: { defaultPrice: 15000, cap: null } });
    expect(changed.status).toBe(200);
    // a cap unit means nothing without a cap
    expect((await changed.json()).tier).toMatchObject({ defaultPrice: 15000, cap: null, capUnit: null, slug: 'editorial-digital' });

    const deleted = await call(tierRoute.DELETE, { id: tier.id, method: 'DELETE' });
    expect(deleted.status).toBe(200);
    expect(await deleted.json()).toMatchObject({ deleted: true });
    expect(await LicenceTier.findByPk(tier.id)).toBeNull();
  });

  it('refuses bad tiers with 400 naming the field, and unknown ids with 404', async () => {
    const short = await call(tiersRoute.POST, { body: tierBody('Short terms', { terms: 'Use it.' }) });
    expect(short.status).toBe(400);
    expect(Object.keys((await short.json()).error.fields)).toContain('terms');
    const markup = await call(tiersRoute.POST, { body: tierBody('Markup', { terms: `<b>${terms}</b>` }) });
    expect(Object.keys((await markup.json()).error.fields)).toContain('terms');
    const noUnit = await call(tiersRoute.POST, { body: tierBody('No unit', { capUnit: '' }) });
    expect(Object.keys((await noUnit.json()).error.fields)).toContain('capUnit');
    const use = await call(tiersRoute.POST, { body: tierBody('Bad use', { use: 'personal' }) });
    expect(Object.keys((await use.json()).error.fields)).toContain('use');
    const price = await call(tiersRoute.POST, { body: tierBody('Bad price', { defaultPrice: 12.5 }) });
    expect(Object.keys((await price.json()).error.fields)).toContain('defaultPrice');

    const { tier } = await (await call(tiersRoute.POST, { body: tierBody('Commercial · Web', { use: 'commercial' }) })).json();
    const merged = await call(tierRoute.PATCH, { id: tier.id, method: 'PATCH', body: { capUnit: null } });
    expect(merged.status).toBe(400);
    expect(Object.keys((await merged.json()).error.fields)).toContain('capUnit');
    const unknownKey = await call(tierRoute.PATCH, { id: tier.id, method: 'PATCH', body: { slug: 'mine' } });
    expect(unknownKey.status).toBe(400);

    expect((await call(tierRoute.PATCH, { id: 999999, method: 'PATCH', body: {} })).status).toBe(404);
    expect((await call(tierRoute.PATCH, { id: 'abc', method: 'PATCH', body: {} })).status).toBe(404);
    expect((await call(tierRoute.DELETE, { id: 999999, method: 'DELETE' })).status).toBe(404);
  });

  it('sets a tier that a work’s own price refers to inactive instead of deleting it', async () => {
    const { tier } = await (await call(tiersRoute.POST, { body: tierBody('Editorial · Print run') })).json();
    await WorkLicencePrice.create({ workId: ids.small, licenceTierId: tier.id, mode: 'override', price: 9900 });
    expect((await quoteCart([{ kind: 'licence', workId: ids.small, tierId: tier.id }])).lines[0]!.ok).toBe(true);

    const res = await call(tierRoute.DELETE, { id: tier.id, method: 'DELETE' });
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body).toMatchObject({ deleted: false, deactivated: true, item: { id: tier.id, active: false } });
    expect(body.message).toMatch(/used by 1 work’s own price.*set inactive instead of deleted/);
    expect((await LicenceTier.findByPk(tier.id))!.active).toBe(false);
    expect(await WorkLicencePrice.count({ where: { licenceTierId: tier.id } })).toBe(1);
    // business rule (PRODUCT.md): an inactive tier is not sold
    const quote = await quoteCart([{ kind: 'licence', workId: ids.small, tierId: tier.id }]);
    expect(quote.lines[0]!.ok).toBe(false);

    const again = await call(tierRoute.PATCH, { id: tier.id, method: 'PATCH', body: { active: true } });
    expect((await again.json()).tier.active).toBe(true);
  });
});

describe('papers', () => {
  it('creates, changes, refuses bad values and deletes an unused paper', async () => {
    const res = await call(papersRoute.POST, { body: paperBody('Baryta, satin', { surchargeBp: 1500, weightGsm: 315 }) });
    expect(res.status).toBe(201);
    const { paper } = await res.json();
    expect(paper).toMatchObject({ slug: 'baryta-satin', surchargeBp: 1500 });

    for (const [field, value] of [['weightGsm', 79], ['weightGsm', 601], ['surchargeBp', -1], ['surchargeBp', 20001]] as const) {
      const bad = await call(papersRoute.POST, { body: paperBody(`Bad ${field} ${value}`, { [field]: value }) });
      expect(bad.status, `${field} ${value}`).toBe(400);
      expect(Object.keys((await bad.json()).error.fields)).toContain(field);
    }
    const changed = await call(paperRoute.PATCH, { id: paper.id, method: 'PATCH', body: { description: 'Smooth, with a soft sheen.' } });
    expect((await changed.json()).paper.description).toBe('Smooth, with a soft sheen.');
    const clash = await call(paperRoute.PATCH, { id: paper.id, method: 'PATCH', body: { name: 'Cotton' } });
    expect(clash.status).toBe(409);

    expect(await (await call(paperRoute.DELETE, { id: paper.id, method: 'DELETE' })).json()).toMatchObject({ deleted: true });
    expect(await Paper.findByPk(paper.id)).toBeNull();
  });

  it('sets a paper with print offers inactive instead of deleting it', async () => {
    const res = await call(paperRoute.DELETE, { id: ids.cotton, method: 'DELETE' });
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body).toMatchObject({ deleted: false, deactivated: true, item: { active: false } });
    expect(body.message).toMatch(/“Cotton” is used by 1 print offer/);
    expect(await PrintOffer.count({ where: { paperId: ids.cotton } })).toBe(1);
    const quote = await quoteCart([{ kind: 'print', offerId: ids.small8x10, mode: 'fill', quantity: 1 }]);
    expect(quote.lines[0]!.ok).toBe(false);
    await call(paperRoute.PATCH, { id: ids.cotton, method: 'PATCH', body: { active: true } });
    expect(await smallWorkGrade()).toMatch(/Wall/);
  });
});

describe('print sizes', () => {
  it('adds an ISO A size in exact millimetres', async () => {
    const a4 = isoA(4); // ISO 216: A4 = 210 × 297 mm
    const res = await call(sizesRoute.POST, { body: sizeBody('A4', { family: 'iso-a', unit: 'mm', ...a4, basePrice: 6500 }) });
    expect(res.status).toBe(201);
    expect((await res.json()).size).toMatchObject({ slug: 'a4', label: 'A4', unit: 'mm', width: 210, height: 297 });
    const again = await call(sizesRoute.POST, { body: sizeBody('A4 again', { family: 'iso-a', unit: 'mm', ...a4 }) });
    expect(again.status).toBe(409);
  });

  it('refuses fractional millimetres, landscape form and a unit that does not fit the family', async () => {
    const fractional = await call(sizesRoute.POST, { body: sizeBody('A5ish', { family: 'iso-a', unit: 'mm', width: 148.5, height: 210 }) });
    expect(fractional.status).toBe(400);
    expect(Object.keys((await fractional.json()).error.fields)).toContain('width');
    const landscape = await call(sizesRoute.POST, { body: sizeBody('14 × 11 in', { width: 14, height: 11 }) });
    expect(Object.keys((await landscape.json()).error.fields)).toContain('width');
    const unit = await call(sizesRoute.POST, { body: sizeBody('A3 in inches', { family: 'iso-a', unit: 'in' }) });
    expect(Object.keys((await unit.json()).error.fields)).toContain('unit');
    const zero = await call(sizesRoute.POST, { body: sizeBody('Nothing', { width: 0 }) });
    expect(Object.keys((await zero.json()).error.fields)).toContain('width');
    // inches may be fractional: US Letter is 8.5 × 11 in (TRADE-FACTS §2.2)
    const letter = await call(sizesRoute.POST, { body: sizeBody('8.5 × 11 in', { width: 8.5, height: 11 }) });
    expect(letter.status).toBe(201);
    expect((await letter.json()).size.slug).toBe('8-5-x-11-in');
  });

  it('keeps the measurements of a size with editions, and deactivates it instead of deleting it', async () => {
    const move = await call(sizeRoute.PATCH, { id: ids.size8x10, method: 'PATCH', body: { width: 9 } });
    expect(move.status).toBe(409);
    expect((await move.json()).error.code).toBe('print_size_in_use');
    const price = await call(sizeRoute.PATCH, { id: ids.size8x10, method: 'PATCH', body: { basePrice: 6500 } });
    expect((await price.json()).size.basePrice).toBe(6500);

    const res = await call(sizeRoute.DELETE, { id: ids.size8x10, method: 'DELETE' });
    const body = await res.json();
    expect(body).toMatchObject({ deleted: false, deactivated: true });
    expect(body.message).toMatch(/1 edition and 1 print offer/);
    expect((await PrintSize.findByPk(ids.size8x10))!.active).toBe(false);
    await call(sizeRoute.PATCH, { id: ids.size8x10, method: 'PATCH', body: { active: true, basePrice: 6000 } });
  });

  it('deletes an unused size', async () => {
    const { size } = await (await call(sizesRoute.POST, { body: sizeBody('5 × 7 in', { width: 5, height: 7 }) })).json();
    expect(await (await call(sizeRoute.DELETE, { id: size.id, method: 'DELETE' })).json()).toMatchObject({ deleted: true });
  });

  it('makes slugs from names', () => {
    expect(slugify('Editorial · Digital', 'x')).toBe('editorial-digital');
    expect(slugify('Papier Hahnemühle', 'x')).toBe('papier-hahnemuhle');
    expect(slugify('··', 'paper')).toBe('paper');
  });
});

describe('watermark', () => {
  it('re-makes every work’s previews in the background, then removes the old folders', async () => {
    const cfg = config();
    const source = path.join(data.dir, 'source.jpg');
    await sharp({ create: { width: 600, height: 400, channels: 3, background: { r: 120, g: 80, b: 40 } } }).jpeg().toFile(source);
    const originalKey = await storeOriginal(source, cfg.originalsDir, 'jpg');
    const original = path.join(cfg.originalsDir, originalKey);
    const contentHash = await sha256File(original);
    const settings = await currentSettings();
    const made = await makeDerivatives(original, { derivativesDir: cfg.derivativesDir, watermarkText: settings.watermarkText, contentHash });
    const work = await insertWork('pear', 600, 400, { originalKey, originalSha256: contentHash, ...made });
    const oldKey = made.derivatives.key;
    expect(fs.existsSync(path.join(cfg.derivativesDir, oldKey, 'sm.jpg'))).toBe(true);

    const res = await putSettings({ watermarkText: '© New mark' });
    expect(res.status).toBe(200);
    const saved = (await res.json()) as SettingsSaved;
    expect(saved.rebuild).toMatchObject({ state: 'running', watermarkText: '© New mark' });
    // The request answered before any work was re-made; the progress is there to poll.
    const running = (await (await call(rebuildRoute.GET)).json()) as RebuildProgress;
    expect(running).toMatchObject({ state: 'running', done: 0 });

    const done = await waitForPreviewRebuild();
    expect(done).toMatchObject({ state: 'done', watermarkText: '© New mark', currentTitle: null });
    expect(done.done).toBe(done.total);
    expect(done.total).toBe(await Work.count());
    // The other test work has no original file on disk: its failure is reported by title, and it keeps its previews.
    expect(done.errors.map((e) => e.title)).toEqual(['small']);

    await work.reload();
    const newKey = work.derivatives.key;
    expect(newKey).not.toBe(oldKey);
    expect(work.derivatives.variants).toEqual(made.derivatives.variants);
    for (const variant of work.derivatives.variants) {
      for (const format of FORMATS) expect(fs.existsSync(path.join(cfg.derivativesDir, newKey, `${variant.name}.${EXTENSION[format]}`))).toBe(true);
    }
    expect(fs.existsSync(path.join(cfg.derivativesDir, oldKey))).toBe(false);
    expect(work.placeholder).toMatch(/^data:image\/webp;base64,/);

    const progress = await call(rebuildRoute.GET);
    expect(progress.status).toBe(200);
    expect(((await progress.json()) as RebuildProgress).state).toBe('done');

    // A second change while a re-make runs restarts it with the newer text; only the newest folder is left.
    await putSettings({ watermarkText: 'Mark two' });
    await putSettings({ watermarkText: 'Mark three' });
    expect(await waitForPreviewRebuild()).toMatchObject({ state: 'done', watermarkText: 'Mark three' });
    await work.reload();
    expect(work.derivatives.key).not.toBe(newKey);
    expect(fs.readdirSync(cfg.derivativesDir)).toEqual([work.derivatives.key]);

    // Saving the same text again starts nothing.
    expect(((await (await putSettings({ shopName: 'Renamed shop' })).json()) as SettingsSaved).rebuild).toBeNull();
  });
});

describe('roles', () => {
  const signedOut = null;
  const buyer = person('buyer');

  it('answers 401 signed out and 403 for a buyer on every route, before reading the body', async () => {
    const routes: [string, Handler, { id?: number; method: string; body?: unknown }][] = [
      ['GET settings', settingsRoute.GET, { method: 'GET' }],
      ['PUT settings', settingsRoute.PUT, { method: 'PUT', body: {} }],
      ['GET rebuild', rebuildRoute.GET, { method: 'GET' }],
      ['POST rebuild', rebuildRoute.POST, { method: 'POST' }],
      ['GET tiers', tiersRoute.GET, { method: 'GET' }],
      ['POST tiers', tiersRoute.POST, { method: 'POST', body: {} }],
      ['PATCH tier', tierRoute.PATCH, { id: 1, method: 'PATCH', body: {} }],
      ['DELETE tier', tierRoute.DELETE, { id: 1, method: 'DELETE' }],
      ['GET papers', papersRoute.GET, { method: 'GET' }],
      ['POST papers', papersRoute.POST, { method: 'POST', body: {} }],
      ['PATCH paper', paperRoute.PATCH, { id: 1, method: 'PATCH', body: {} }],
      ['DELETE paper', paperRoute.DELETE, { id: 1, method: 'DELETE' }],
      ['GET sizes', sizesRoute.GET, { method: 'GET' }],
      ['POST sizes', sizesRoute.POST, { method: 'POST', body: {} }],
      ['PATCH size', sizeRoute.PATCH, { id: 1, method: 'PATCH', body: {} }],
      ['DELETE size', sizeRoute.DELETE, { id: 1, method: 'DELETE' }],
    ];
    for (const [name, handler, opts] of routes) {
      const out = await call(handler, { ...opts, user: signedOut });
      expect(out.status, name).toBe(401);
      expect((await out.json()).error.code, name).toBe('unauthenticated');
      const no = await call(handler, { ...opts, user: buyer });
      expect(no.status, name).toBe(403);
    }
    // nothing changed
    expect(await PrintSize.findByPk(1)).not.toBeNull();
  });

  for (const role of ['photographer', 'admin'] as const) {
    it(`lets ${role === 'admin' ? 'an admin' : 'the photographer'} use every route`, async () => {
      const user = person(role);
      const ok = (res: Response, name: string) => expect(res.status, name).toBeLessThan(300);
      ok(await call(settingsRoute.GET, { user }), 'GET settings');
      ok(await putSettings({ tagline: `Saved by ${role}` }, user), 'PUT settings');
      ok(await call(rebuildRoute.GET, { user }), 'GET rebuild');
      const started = await call(rebuildRoute.POST, { user, method: 'POST' });
      expect(started.status).toBe(202);
      await waitForPreviewRebuild();

      ok(await call(tiersRoute.GET, { user }), 'GET tiers');
      const tier = await call(tiersRoute.POST, { user, body: tierBody(`Tier by ${role}`) });
      expect(tier.status).toBe(201);
      const tierId = (await tier.json()).tier.id;
      ok(await call(tierRoute.PATCH, { user, id: tierId, method: 'PATCH', body: { summary: 'Changed.' } }), 'PATCH tier');
      ok(await call(tierRoute.DELETE, { user, id: tierId, method: 'DELETE' }), 'DELETE tier');

      ok(await call(papersRoute.GET, { user }), 'GET papers');
      const paper = await call(papersRoute.POST, { user, body: paperBody(`Paper by ${role}`) });
      expect(paper.status).toBe(201);
      const paperId = (await paper.json()).paper.id;
      ok(await call(paperRoute.PATCH, { user, id: paperId, method: 'PATCH', body: { weightGsm: 300 } }), 'PATCH paper');
      ok(await call(paperRoute.DELETE, { user, id: paperId, method: 'DELETE' }), 'DELETE paper');

      ok(await call(sizesRoute.GET, { user }), 'GET sizes');
      const size = await call(sizesRoute.POST, { user, body: sizeBody(`Size by ${role}`, { width: role === 'admin' ? 12 : 10, height: 15 }) });
      expect(size.status).toBe(201);
      const sizeId = (await size.json()).size.id;
      ok(await call(sizeRoute.PATCH, { user, id: sizeId, method: 'PATCH', body: { basePrice: 100 } }), 'PATCH size');
      ok(await call(sizeRoute.DELETE, { user, id: sizeId, method: 'DELETE' }), 'DELETE size');
    });
  }
});
