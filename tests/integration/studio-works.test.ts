import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { APIContext } from 'astro';
import * as list from '~/pages/api/studio/works/index';
import * as one from '~/pages/api/studio/works/[id]';
import * as licences from '~/pages/api/studio/works/[id]/licences';
import * as offers from '~/pages/api/studio/works/[id]/offers';
import * as publish from '~/pages/api/studio/works/[id]/publish';
import * as bulk from '~/pages/api/studio/works/bulk';
import type { SessionUser } from '~/lib/server/auth-types';
import {
  PROPERTY_RELEASE_STATUSES, bulkInput, licencePricesInput, maxArtistProofs, printOffersInput, workDetailsInput,
  type BulkAnswer, type SizeOfferInput, type StudioSaveAnswer, type StudioWorkEditor, type StudioWorksList,
} from '~/lib/studio-schemas';
import {
  Edition, LicenceTier, Paper, PrintOffer, PrintSize, Series, Work, WorkLicencePrice,
  insertSettings, insertWork, useTempDatabase, type TestData,
} from '../_fixtures';

type Role = SessionUser['role'];
const person = (role: Role): SessionUser => ({ id: `u-${role}`, email: `${role}@x`, name: role, role, emailVerified: true });
const photographer: SessionUser = { id: 'u1', email: 'p@x', name: 'P', role: 'photographer', emailVerified: true };

let data: TestData;
const ids: Record<string, number> = {};

type Handler = (context: APIContext) => Promise<Response> | Response;

function call(handler: Handler, opts: { id?: number | string; body?: unknown; method?: string; query?: string; user?: SessionUser | null } = {}) {
  const url = new URL(`http://localhost/api/studio/works${opts.id != null ? `/${opts.id}` : ''}${opts.query ?? ''}`);
  const init: RequestInit = { method: opts.method ?? (opts.body === undefined ? 'GET' : 'POST') };
  if (opts.body !== undefined) {
    init.headers = { 'Content-Type': 'application/json' };
    init.body = typeof opts.body === 'string' ? opts.body : JSON.stringify(opts.body);
  }
  const user = opts.user === undefined ? photographer : opts.user;
  const context = {
    params: opts.id != null ? { id: String(opts.id) } : {},
    request: new Request(url, init),
    url,
    locals: { user, session: null },
  };
  return handler(context as unknown as APIContext);
}

async function editorOf(id: number): Promise<StudioWorkEditor> {
  const res = await call(one.GET, { id });
  expect(res.status).toBe(200);
  return res.json();
}

/** The size's current choices from the editor, changed as given. */
async function sizeChoice(workId: number, sizeId: number, change: Partial<SizeOfferInput>): Promise<SizeOfferInput> {
  const editor = await editorOf(workId);
  const current = editor.sizes.find((s) => s.sizeId === sizeId)!.offer;
  return { ...current, ...change };
}

const putOffers = (id: number, sizes: SizeOfferInput[], user?: SessionUser | null) =>
  call(offers.PUT, { id, body: { sizes }, method: 'PUT', user });

beforeAll(async () => {
  data = await useTempDatabase();
  await insertSettings();
  const series = await Series.create({ slug: 'pears', title: 'Pears', description: '' });
  const other = await Series.create({ slug: 'keys', title: 'Keys', description: '' });
  const big = await insertWork('big', 6000, 4000);
  const small = await insertWork('small', 2400, 1600, { status: 'draft', publishedAt: null });
  const noAlt = await insertWork('no-alt', 6000, 4000, { status: 'draft', publishedAt: null, altText: '' });
  const ready = await insertWork('ready', 6000, 4000, { status: 'draft', publishedAt: null, seriesId: series.id });
  const fresh = await insertWork('fresh', 6000, 4000, { status: 'draft', publishedAt: null });
  const roles = await insertWork('roles', 6000, 4000);
  const released = await insertWork('released', 6000, 4000, { propertyRelease: 'PR-UPR' });
  const editorial = await LicenceTier.create({ slug: 'ed', name: 'Editorial test', use: 'editorial', summary: '', terms: 't', media: 'web', cap: 1000, capUnit: 'views', territory: 'Worldwide', termMonths: 12, defaultPrice: 12000 });
  const commercial = await LicenceTier.create({ slug: 'co', name: 'Commercial test', use: 'commercial', summary: '', terms: 't', media: 'ads', cap: null, capUnit: null, territory: 'UK', termMonths: 12, defaultPrice: 45000 });
  await WorkLicencePrice.create({ workId: released.id, licenceTierId: commercial.id, mode: 'override', price: 50000 });
  const s8x10 = await PrintSize.create({ slug: '8x10', label: '8 × 10 in', family: 'inch', unit: 'in', width: 8, height: 10, basePrice: 6000, position: 1 });
  const s16x20 = await PrintSize.create({ slug: '16x20', label: '16 × 20 in', family: 'inch', unit: 'in', width: 16, height: 20, basePrice: 18000, position: 2 });
  const cotton = await Paper.create({ slug: 'cotton', name: 'Cotton', surface: 'matte', weightGsm: 310, surchargeBp: 0, description: '' });
  const baryta = await Paper.create({ slug: 'baryta', name: 'Baryta', surface: 'satin', weightGsm: 315, surchargeBp: 1500, description: '' });
  Object.assign(ids, {
    series: series.id, other: other.id, big: big.id, small: small.id, noAlt: noAlt.id, ready: ready.id, fresh: fresh.id,
    roles: roles.id, released: released.id, editorial: editorial.id, commercial: commercial.id,
    s8x10: s8x10.id, s16x20: s16x20.id, cotton: cotton.id, baryta: baryta.id,
  });
});

afterAll(async () => data.cleanup());

describe('roles on every Studio route', () => {
  const routes: [string, Handler, () => { id?: number; body?: unknown; method?: string }][] = [
    ['GET /api/studio/works', list.GET, () => ({})],
    ['GET /api/studio/works/:id', one.GET, () => ({ id: ids.roles })],
    ['PATCH /api/studio/works/:id', one.PATCH, () => ({ id: ids.roles, method: 'PATCH', body: { caption: 'A caption.' } })],
    ['PUT /api/studio/works/:id/licences', licences.PUT, () => ({ id: ids.roles, method: 'PUT', body: { tiers: [{ tierId: ids.editorial, mode: 'default' }] } })],
    ['PUT /api/studio/works/:id/offers', offers.PUT, () => ({
      id: ids.roles, method: 'PUT',
      body: { sizes: [{ sizeId: ids.s8x10, offered: true, papers: [ids.cotton], edition: { kind: 'open', total: null, artistProofs: 0 }, acceptWall: false }] },
    })],
    ['POST /api/studio/works/:id/publish', publish.POST, () => ({ id: ids.roles, body: { publish: true } })],
    ['POST /api/studio/works/bulk', bulk.POST, () => ({ body: { ids: [ids.roles], action: 'publish' } })],
  ];

  for (const [name, handler, args] of routes) {
    it(`${name}: 401 signed out, 403 buyer, 2xx photographer and admin`, async () => {
      // business rule (PRODUCT.md): the Studio is the photographer's; an admin may do everything
      const signedOut = await call(handler, { ...args(), user: null });
      expect(signedOut.status).toBe(401);
      expect((await signedOut.json()).error.code).toBe('unauthenticated');
      const buyer = await call(handler, { ...args(), user: person('buyer') });
      expect(buyer.status).toBe(403);
      expect((await buyer.json()).error.code).toBe('forbidden');
      expect((await call(handler, { ...args(), user: photographer })).status).toBe(200);
      expect((await call(handler, { ...args(), user: person('admin') })).status).toBe(200);
    });
  }

  it('checks the role before reading the body', async () => {
    const res = await call(one.PATCH, { id: ids.roles, method: 'PATCH', body: '{not json', user: person('buyer') });
    expect(res.status).toBe(403);
  });
});

describe('guard order and inputs', () => {
  it('answers a bad body with 400 naming the field, before looking the work up', async () => {
    const res = await call(one.PATCH, { id: 999999, method: 'PATCH', body: { title: '', focal: { x: 1.5, y: 0.5 } } });
    expect(res.status).toBe(400);
    const body = await res.json();
    expect(body.error.code).toBe('invalid_body');
    expect(Object.keys(body.error.fields)).toEqual(expect.arrayContaining(['title', 'focal.x']));
  });

  it('answers unknown or malformed ids with 404', async () => {
    expect((await call(one.GET, { id: 999999 })).status).toBe(404);
    expect((await call(one.GET, { id: 'abc' })).status).toBe(404);
    expect((await call(one.PATCH, { id: 999999, method: 'PATCH', body: { caption: 'x' } })).status).toBe(404);
    expect((await call(publish.POST, { id: 999999, body: { publish: true } })).status).toBe(404);
  });

  it('refuses a body that is not JSON', async () => {
    const res = await call(one.PATCH, { id: ids.fresh, method: 'PATCH', body: '{"title":' });
    expect(res.status).toBe(400);
    expect((await res.json()).error.code).toBe('invalid_json');
  });

  it('saves details, normalising keywords, and refuses an unknown series with 422', async () => {
    const res = await call(one.PATCH, {
      id: ids.fresh, method: 'PATCH',
      body: { title: '  Quince on linen ', keywords: ['Quince', ' still life '], seriesId: ids.series, focal: { x: 0.25, y: 0.75 } },
    });
    expect(res.status).toBe(200);
    const answer = (await res.json()) as StudioSaveAnswer;
    expect(answer.message).toBe('Details saved.');
    expect(answer.editor.details).toMatchObject({
      title: 'Quince on linen', keywords: ['quince', 'still life'], seriesId: ids.series, focal: { x: 0.25, y: 0.75 },
    });
    const unknown = await call(one.PATCH, { id: ids.fresh, method: 'PATCH', body: { seriesId: 999999 } });
    expect(unknown.status).toBe(422);
    expect((await unknown.json()).error.fields).toHaveProperty('seriesId');
  });
});

describe('publishing', () => {
  it('refuses to publish without alt text (422), then publishes once it is there', async () => {
    // business rule (PRODUCT.md): alt text is required before publishing
    const refused = await call(publish.POST, { id: ids.noAlt, body: { publish: true } });
    expect(refused.status).toBe(422);
    const err = (await refused.json()).error;
    expect(err.code).toBe('alt_text_required');
    expect(err.message).toMatch(/alt text/i);
    expect((await Work.findByPk(ids.noAlt))!.status).toBe('draft');

    const editor = await editorOf(ids.noAlt);
    expect(editor.publish).toEqual({ canPublish: false, reasons: [expect.stringMatching(/alt text/i)] });

    await call(one.PATCH, { id: ids.noAlt, method: 'PATCH', body: { altText: 'A pear on slate.' } });
    const ok = await call(publish.POST, { id: ids.noAlt, body: { publish: true } });
    expect(ok.status).toBe(200);
    const answer = (await ok.json()) as StudioSaveAnswer;
    expect(answer.editor.work.status).toBe('published');
    expect(answer.editor.work.publishedAt).not.toBeNull();
  });

  it('sets publishedAt the first time only; unpublishing returns the work to draft', async () => {
    const first = (await (await call(publish.POST, { id: ids.ready, body: { publish: true } })).json()) as StudioSaveAnswer;
    const publishedAt = first.editor.work.publishedAt;
    expect(publishedAt).not.toBeNull();
    const down = (await (await call(publish.POST, { id: ids.ready, body: { publish: false } })).json()) as StudioSaveAnswer;
    expect(down.editor.work.status).toBe('draft');
    expect(down.editor.work.publishedAt).toBe(publishedAt);
    const again = (await (await call(publish.POST, { id: ids.ready, body: { publish: true } })).json()) as StudioSaveAnswer;
    expect(again.editor.work.status).toBe('published');
    expect(again.editor.work.publishedAt).toBe(publishedAt);
  });

  it('will not clear the alt text of a published work', async () => {
    const res = await call(one.PATCH, { id: ids.big, method: 'PATCH', body: { altText: '   ' } });
    expect(res.status).toBe(422);
    expect((await res.json()).error.code).toBe('alt_text_required');
  });

  it('refuses a publish body without a boolean', async () => {
    const res = await call(publish.POST, { id: ids.big, body: { publish: 'yes' } });
    expect(res.status).toBe(400);
    expect((await res.json()).error.fields).toHaveProperty('publish');
  });
});

describe('print offers', () => {
  it('grades each size for fill and fit', async () => {
    const editor = await editorOf(ids.small);
    const at8x10 = editor.sizes.find((s) => s.sizeId === ids.s8x10)!;
    // 2400×1600 px on 10×8 in: fill min(240, 200) = 200 ppi, fit max(240, 200) = 240 ppi (TRADE-FACTS §2.3);
    // 200 ppi clears the eye's 179 ppi at 1.5 × 12.8 in (1′ acuity, TRADE-FACTS §1.2) and the 150 ppi wall floor
    expect(at8x10.fill).toEqual({ grade: 'wall', ppi: 200 });
    expect(at8x10.fit).toEqual({ grade: 'fine', ppi: 240 }); // 240 = the shop floor (PRODUCT.md default)
    expect(at8x10.saleGrade).toBe('wall');
    const at16x20 = editor.sizes.find((s) => s.sizeId === ids.s16x20)!;
    // 2400×1600 on 20×16 in: fill min(120, 100) = 100 ppi, fit 120 ppi, both under the 150 ppi wall floor
    expect(at16x20.fit).toEqual({ grade: 'too-small', ppi: 120 });
    expect(at16x20.offerable).toBe(false);
    const big = await editorOf(ids.big);
    // 6000×4000 px on 10×8 in: fill 500 ppi, fit 600 ppi (TRADE-FACTS §2.4)
    expect(big.sizes.find((s) => s.sizeId === ids.s8x10)).toMatchObject({ fill: { grade: 'crisp', ppi: 500 }, fit: { grade: 'crisp', ppi: 600 } });
  });

  it('never offers a size whose best grade is Too small (422)', async () => {
    // business rule (PRODUCT.md)
    const res = await putOffers(ids.small, [
      { sizeId: ids.s16x20, offered: true, papers: [ids.cotton], edition: { kind: 'open', total: null, artistProofs: 0 }, acceptWall: true },
    ]);
    expect(res.status).toBe(422);
    const err = (await res.json()).error;
    expect(err.code).toBe('too_small');
    expect(err.message).toMatch(/120 ppi/);
    expect(err.fields).toHaveProperty(['sizes.0.offered']);
    expect(await PrintOffer.count({ where: { workId: ids.small } })).toBe(0);
  });

  it('needs acceptWall for a Wall-grade size: 422 without, saved with it', async () => {
    // business rule (PRODUCT.md)
    const sizes = (acceptWall: boolean): SizeOfferInput[] => [
      { sizeId: ids.s8x10, offered: true, papers: [ids.cotton, ids.baryta], edition: { kind: 'open', total: null, artistProofs: 0 }, acceptWall, priceOverrides: [{ paperId: ids.baryta, price: 7500 }] },
    ];
    const refused = await putOffers(ids.small, sizes(false));
    expect(refused.status).toBe(422);
    const err = (await refused.json()).error;
    expect(err.code).toBe('wall_not_accepted');
    expect(err.fields).toHaveProperty(['sizes.0.acceptWall']);

    const ok = await putOffers(ids.small, sizes(true));
    expect(ok.status).toBe(200);
    const answer = (await ok.json()) as StudioSaveAnswer;
    expect(answer.message).toMatch(/1 size on offer/);
    const at8x10 = answer.editor.sizes.find((s) => s.sizeId === ids.s8x10)!;
    expect(at8x10.offer).toMatchObject({ offered: true, acceptWall: true, priceOverrides: [{ paperId: ids.baryta, price: 7500 }] });
    expect(at8x10.offer.papers.sort()).toEqual([ids.cotton, ids.baryta].sort());
    expect(await PrintOffer.count({ where: { workId: ids.small, active: true } })).toBe(2);
  });

  it('takes a size off sale without deleting its offers or edition', async () => {
    const res = await putOffers(ids.small, [await sizeChoice(ids.small, ids.s8x10, { offered: false })]);
    expect(res.status).toBe(200);
    expect(await PrintOffer.count({ where: { workId: ids.small, active: true } })).toBe(0);
    expect(await PrintOffer.count({ where: { workId: ids.small } })).toBe(2);
    expect(await Edition.count({ where: { workId: ids.small } })).toBe(1);
  });

  it('lets a draft that was never published change N freely', async () => {
    const limited = (total: number): SizeOfferInput => ({
      sizeId: ids.s8x10, offered: true, papers: [ids.cotton], edition: { kind: 'limited', total, artistProofs: 0 }, acceptWall: false,
    });
    expect((await putOffers(ids.fresh, [limited(10)])).status).toBe(200);
    expect((await putOffers(ids.fresh, [limited(20)])).status).toBe(200);
    const editor = await editorOf(ids.fresh);
    expect(editor.sizes.find((s) => s.sizeId === ids.s8x10)!.edition).toMatchObject({ kind: 'limited', total: 20, fixed: false });
  });

  it('never raises N once the work has been published with the edition (409); lowering is allowed', async () => {
    // business rule (PRODUCT.md): N is fixed when the edition opens and is never raised
    const limited = (total: number, artistProofs = 0): SizeOfferInput => ({
      sizeId: ids.s16x20, offered: true, papers: [ids.baryta], edition: { kind: 'limited', total, artistProofs }, acceptWall: false,
    });
    expect((await putOffers(ids.big, [limited(25, 2)])).status).toBe(200); // `big` is published: the edition opens now

    const raised = await putOffers(ids.big, [limited(26)]);
    expect(raised.status).toBe(409);
    const err = (await raised.json()).error;
    expect(err.code).toBe('edition_fixed');
    expect(err.fields).toHaveProperty(['sizes.0.edition.total']);
    expect(err.message).toMatch(/never raised/);

    const toOpen = await putOffers(ids.big, [{ ...limited(25), edition: { kind: 'open', total: null, artistProofs: 0 } }]);
    expect(toOpen.status).toBe(409);

    const lowered = await putOffers(ids.big, [limited(20, 2)]);
    expect(lowered.status).toBe(200);
    const edition = (await lowered.json() as StudioSaveAnswer).editor.sizes.find((s) => s.sizeId === ids.s16x20)!.edition;
    expect(edition).toEqual({ kind: 'limited', total: 20, artistProofs: 2, fixed: true });

    // Taking the size off sale and offering it again does not reopen N.
    expect((await putOffers(ids.big, [{ ...limited(20), offered: false }])).status).toBe(200);
    expect((await putOffers(ids.big, [limited(30)])).status).toBe(409);
  });

  it('keeps artist’s proofs within 10 % of N, rounded down', async () => {
    // common practice: APs ≤ 10 % of N (TRADE-FACTS §8.2): N = 25 → at most floor(2.5) = 2 (TRADE-FACTS check values §8)
    expect(maxArtistProofs(25)).toBe(2);
    expect(maxArtistProofs(9)).toBe(0);
    const withProofs = (artistProofs: number): SizeOfferInput => ({
      sizeId: ids.s8x10, offered: true, papers: [ids.cotton], edition: { kind: 'limited', total: 25, artistProofs }, acceptWall: false,
    });
    const over = await putOffers(ids.ready, [withProofs(3)]);
    expect(over.status).toBe(400);
    const err = (await over.json()).error;
    expect(err.fields).toHaveProperty(['sizes.0.edition.artistProofs']);
    expect(err.message).toMatch(/At most 2 artist’s proofs for an edition of 25/);
    expect((await putOffers(ids.ready, [withProofs(2)])).status).toBe(200);
  });

  it('refuses unknown papers with 422 and an offered size without papers with 400', async () => {
    const unknownPaper = await putOffers(ids.fresh, [
      { sizeId: ids.s8x10, offered: true, papers: [999999], edition: { kind: 'open', total: null, artistProofs: 0 }, acceptWall: false },
    ]);
    expect(unknownPaper.status).toBe(422);
    expect((await unknownPaper.json()).error.fields).toHaveProperty(['sizes.0.papers.0']);
    const noPaper = await putOffers(ids.fresh, [
      { sizeId: ids.s8x10, offered: true, papers: [], edition: { kind: 'open', total: null, artistProofs: 0 }, acceptWall: false },
    ]);
    expect(noPaper.status).toBe(400);
    expect((await noPaper.json()).error.fields).toHaveProperty(['sizes.0.papers']);
  });
});

describe('licence prices and property releases', () => {
  it('saves an override, a withdrawal and a return to the default', async () => {
    const put = (tiers: unknown[]) => call(licences.PUT, { id: ids.released, method: 'PUT', body: { tiers } });
    const saved = await put([{ tierId: ids.editorial, mode: 'override', price: 9900 }, { tierId: ids.commercial, mode: 'withdrawn' }]);
    expect(saved.status).toBe(200);
    const answer = (await saved.json()) as StudioSaveAnswer;
    expect(answer.editor.licences.map((l) => [l.mode, l.price])).toEqual([['override', 9900], ['withdrawn', null]]);
    const back = (await (await put([{ tierId: ids.editorial, mode: 'default' }])).json()) as StudioSaveAnswer;
    expect(back.editor.licences[0]).toMatchObject({ mode: 'default', price: null, defaultPrice: 12000 });
    expect(await WorkLicencePrice.count({ where: { workId: ids.released, licenceTierId: ids.editorial } })).toBe(0);

    const noPrice = await put([{ tierId: ids.editorial, mode: 'override' }]);
    expect(noPrice.status).toBe(400);
    expect((await noPrice.json()).error.fields).toHaveProperty(['tiers.0.price']);
  });

  it('PR-NON withdraws the commercial tiers and keeps them withdrawn until the status changes', async () => {
    // PLUS PropertyReleaseStatus vocabulary (TRADE-FACTS §7.3); business rule (PRODUCT.md)
    await call(licences.PUT, { id: ids.released, method: 'PUT', body: { tiers: [{ tierId: ids.commercial, mode: 'override', price: 50000 }] } });
    const res = await call(one.PATCH, { id: ids.released, method: 'PATCH', body: { propertyRelease: 'PR-NON' } });
    expect(res.status).toBe(200);
    const answer = (await res.json()) as StudioSaveAnswer;
    expect(answer.message).toMatch(/Commercial test is now withdrawn/);
    const commercial = answer.editor.licences.find((l) => l.tierId === ids.commercial)!;
    expect(commercial).toMatchObject({ mode: 'withdrawn', locked: true });
    expect(answer.editor.licences.find((l) => l.tierId === ids.editorial)).toMatchObject({ mode: 'default', locked: false });

    const reenable = await call(licences.PUT, { id: ids.released, method: 'PUT', body: { tiers: [{ tierId: ids.commercial, mode: 'default' }] } });
    expect(reenable.status).toBe(422);
    const err = (await reenable.json()).error;
    expect(err.code).toBe('release_required');
    expect(err.fields).toHaveProperty(['tiers.0.mode']);

    await call(one.PATCH, { id: ids.released, method: 'PATCH', body: { propertyRelease: 'PR-UPR' } });
    const after = await call(licences.PUT, { id: ids.released, method: 'PUT', body: { tiers: [{ tierId: ids.commercial, mode: 'default' }] } });
    expect(after.status).toBe(200);
    expect(((await after.json()) as StudioSaveAnswer).editor.licences.find((l) => l.tierId === ids.commercial)).toMatchObject({ mode: 'default', locked: false });
  });

  it('reads a stored release code outside the vocabulary as no release', async () => {
    const w = await insertWork('odd-release', 6000, 4000, { propertyRelease: 'unknown' });
    const editor = await editorOf(w.id);
    expect(editor.details.propertyRelease).toBe('PR-NON');
    expect(editor.licences.find((l) => l.tierId === ids.commercial)).toMatchObject({ mode: 'withdrawn', locked: true });
  });

  it('rejects a release code outside the PLUS vocabulary', async () => {
    const res = await call(one.PATCH, { id: ids.released, method: 'PATCH', body: { propertyRelease: 'PR-MAYBE' } });
    expect(res.status).toBe(400);
    expect((await res.json()).error.fields).toHaveProperty('propertyRelease');
  });
});

describe('bulk actions and the works table', () => {
  it('publishes what it can and reports each row', async () => {
    const draftA = await insertWork('bulk-a', 6000, 4000, { status: 'draft', publishedAt: null });
    const draftB = await insertWork('bulk-b', 6000, 4000, { status: 'draft', publishedAt: null });
    const missingAlt = await insertWork('bulk-c', 6000, 4000, { status: 'draft', publishedAt: null, altText: '' });
    const res = await call(bulk.POST, { body: { ids: [draftA.id, missingAlt.id, draftB.id, 999999], action: 'publish' } });
    expect(res.status).toBe(200);
    const answer = (await res.json()) as BulkAnswer;
    expect(answer.results.map((r) => [r.id, r.ok, r.outcome])).toEqual([
      [draftA.id, true, 'published'],
      [missingAlt.id, false, 'needs-alt-text'],
      [draftB.id, true, 'published'],
      [999999, false, 'not-found'],
    ]);
    expect(answer.summary).toBe('2 published; 1 needs alt text; 1 not found');
    expect((await Work.findByPk(draftA.id))!.publishedAt).not.toBeNull();
    expect((await Work.findByPk(missingAlt.id))!.status).toBe('draft');

    const down = (await (await call(bulk.POST, { body: { ids: [draftA.id, draftB.id], action: 'unpublish' } })).json()) as BulkAnswer;
    expect(down.summary).toBe('2 back to draft');
  });

  it('assigns a series, or takes works out of one', async () => {
    const moved = (await (await call(bulk.POST, { body: { ids: [ids.fresh, ids.small], action: 'assign-series', seriesId: ids.other } })).json()) as BulkAnswer;
    expect(moved.summary).toBe('2 moved to “Keys”');
    expect((await Work.findByPk(ids.small))!.seriesId).toBe(ids.other);
    const out = (await (await call(bulk.POST, { body: { ids: [ids.small], action: 'assign-series', seriesId: null } })).json()) as BulkAnswer;
    expect(out.summary).toBe('1 taken out of their series');
    expect((await Work.findByPk(ids.small))!.seriesId).toBeNull();

    const noSeries = await call(bulk.POST, { body: { ids: [ids.small], action: 'assign-series' } });
    expect(noSeries.status).toBe(400);
    const unknown = await call(bulk.POST, { body: { ids: [ids.small], action: 'assign-series', seriesId: 999999 } });
    expect(unknown.status).toBe(422);
    const tooMany = await call(bulk.POST, { body: { ids: Array.from({ length: 201 }, (_, i) => i + 1), action: 'publish' } });
    expect(tooMany.status).toBe(400);
  });

  it('bulk-publishing a PR-NON work withdraws its commercial tiers', async () => {
    const w = await insertWork('bulk-pr-non', 6000, 4000, { status: 'draft', publishedAt: null, propertyRelease: 'PR-NON' });
    await call(bulk.POST, { body: { ids: [w.id], action: 'publish' } });
    const row = await WorkLicencePrice.findOne({ where: { workId: w.id, licenceTierId: ids.commercial } });
    expect(row?.mode).toBe('withdrawn');
  });

  it('lists works with status, series, offers and sales; filters and sorts', async () => {
    const res = await call(list.GET, { query: '?sort=title&dir=asc' });
    expect(res.status).toBe(200);
    const body = (await res.json()) as StudioWorksList;
    const titles = body.works.map((w) => w.title);
    expect(titles).toEqual([...titles].sort((a, b) => a.localeCompare(b, 'en', { sensitivity: 'base', numeric: true })));
    const big = body.works.find((w) => w.id === ids.big)!;
    expect(big).toMatchObject({ status: 'published', sales: 0, hasAltText: true });
    for (const w of body.works) expect(w.offers).toBe(await PrintOffer.count({ where: { workId: w.id, active: true } }));
    expect(body.works.find((w) => w.id === ids.fresh)!.offers).toBe(1); // 8×10 on cotton, from the draft edition test
    expect(big.thumb.src).toMatch(/^\/media\/a{24}\/sm\.jpg$/);
    expect(body.series.map((s) => s.title)).toEqual(['Keys', 'Pears']); // same position, so by title

    const drafts = (await (await call(list.GET, { query: '?status=draft' })).json()) as StudioWorksList;
    expect(drafts.works.every((w) => w.status === 'draft')).toBe(true);
    expect(drafts.works.length).toBeGreaterThan(0);

    const found = (await (await call(list.GET, { query: '?q=quince' })).json()) as StudioWorksList;
    expect(found.works.map((w) => w.id)).toEqual([ids.fresh]);

    const inSeries = (await (await call(list.GET, { query: `?series=${ids.series}` })).json()) as StudioWorksList;
    expect(inSeries.works.map((w) => w.id)).toEqual([ids.ready]);

    const byOffers = (await (await call(list.GET, { query: '?sort=offers&dir=desc' })).json()) as StudioWorksList;
    expect(byOffers.works[0]!.offers).toBeGreaterThanOrEqual(byOffers.works[1]!.offers);

    const bad = await call(list.GET, { query: '?sort=price' });
    expect(bad.status).toBe(400);
    expect((await bad.json()).error.fields).toHaveProperty('sort');
  });
});

describe('schemas', () => {
  it('round-trips the editor data through the same schemas the forms and the API use', async () => {
    const editor = await editorOf(ids.big);
    expect(workDetailsInput.parse(editor.details)).toEqual(editor.details);
    const sizes = { sizes: editor.sizes.filter((s) => s.offerable).map((s) => s.offer) };
    expect(printOffersInput.parse(sizes)).toEqual(sizes);
    const tiers = { tiers: editor.licences.map((l) => ({ tierId: l.tierId, mode: l.mode, price: l.price })) };
    expect(licencePricesInput.parse(tiers)).toEqual(tiers);
    const saved = await call(one.PATCH, { id: ids.big, method: 'PATCH', body: editor.details });
    expect(saved.status).toBe(200);
    expect(((await saved.json()) as StudioSaveAnswer).editor.details).toEqual(editor.details);
  });

  it('normalises keywords and checks their limits', () => {
    const base = { title: 'T', caption: '', altText: '', seriesId: null, focal: { x: 0.5, y: 0.5 }, propertyRelease: 'PR-NAP' as const };
    expect(workDetailsInput.parse({ ...base, keywords: ['  Pear ', 'Still-Life'] }).keywords).toEqual(['pear', 'still-life']);
    expect(workDetailsInput.safeParse({ ...base, keywords: ['pear', 'Pear'] }).success).toBe(false);
    expect(workDetailsInput.safeParse({ ...base, keywords: ['x'.repeat(41)] }).success).toBe(false);
    expect(workDetailsInput.safeParse({ ...base, keywords: Array.from({ length: 31 }, (_, i) => `k${i}`) }).success).toBe(false);
    expect(workDetailsInput.safeParse({ ...base, title: 'x'.repeat(121), keywords: [] }).success).toBe(false);
    // PLUS PropertyReleaseStatus vocabulary (TRADE-FACTS §7.3)
    expect(PROPERTY_RELEASE_STATUSES).toEqual(['PR-NON', 'PR-NAP', 'PR-UPR', 'PR-LPR']);
    expect(bulkInput.safeParse({ ids: [], action: 'publish' }).success).toBe(false);
  });
});
