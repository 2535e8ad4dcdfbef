/**
 * The Studio's side of the catalogue: loads works for the editor and the works table, and saves
 * details, licence prices, print offers and editions, publishing and bulk actions.
 * Every rule is checked here, inside the write's transaction, whatever the browser already checked.
 */
import { Op, QueryTypes, Transaction } from 'sequelize';
import type { z } from 'zod';
import { db } from './db';
import { Edition, LicenceTier, Paper, PrintOffer, PrintSize, Series, Work, WorkLicencePrice } from './models';
import { ftsQuery, getShop, pictureOf, type ShopInfo } from './catalogue';
import { itemsSoldByWork } from './sales';
import { jsonError, zodFields } from './http';
import { recordAudit, type AuditActor } from './audit';
import { mediaUrl, variantAtLeast } from '../media';
import { GRADE_LABEL, gradePrint, type PrintGradeResult } from '../print-grade';
import {
  commercialAllowed, isPropertyReleaseStatus, lowestSaleGrade, maxArtistProofs,
  type BulkAnswer, type BulkInput, type BulkOutcome, type BulkRowResult, type LicencePricesInput, type PrintOffersInput,
  type SeriesChoice, type SizeOfferInput, type StudioLicence, type StudioSize, type StudioWorkEditor,
  type StudioWorkRow, type StudioWorksList, type WorkDetailsPatch, type WorksListQuery,
} from '../studio-schemas';

/** A rule the request broke: the endpoint answers with `status` and `{ error: { code, message, fields } }`. */
export class StudioError extends Error {
  constructor(
    readonly status: 404 | 409 | 422,
    readonly code: string,
    message: string,
    readonly fields?: Record<string, string>,
  ) {
    super(message);
    this.name = 'StudioError';
  }
}

/** Maps a StudioError to its JSON answer; anything else is logged here and answered without detail. */
export function studioFailure(error: unknown): Response {
  if (error instanceof StudioError) return jsonError(error.status, error.code, error.message, error.fields);
  console.error('studio: unexpected error', error);
  return jsonError(500, 'server_error', 'Something went wrong on our side; nothing was saved.');
}

/** 400 for a body or query that fails its schema, naming each bad field by path. */
export function invalidInput(error: z.ZodError, code = 'invalid_body'): Response {
  const fields = zodFields(error);
  const [path, message] = Object.entries(fields)[0]!;
  return jsonError(400, code, path === '(body)' ? message : `${path}: ${message}`, fields);
}

/** The work id from the route, or null when it cannot be one (answered as 404 like any unknown id). */
export function workIdParam(value: string | undefined): number | null {
  if (!value || !/^[1-9][0-9]{0,9}$/.test(value)) return null;
  return Number(value);
}

export const NO_STORE = { 'Cache-Control': 'no-store' } as const;

function notFound(id: number): StudioError {
  return new StudioError(404, 'not_found', `There is no work with id ${id}.`);
}

/** 404 for an id in the path that is not a work. */
export function workNotFound(value: string | undefined): Response {
  return jsonError(404, 'not_found', value ? `There is no work with id ${value}.` : 'There is no such work.');
}

/** SQLite has one writer: take the write lock at BEGIN so the checks and the writes see the same rows. */
function writeTransaction<T>(work: (t: Transaction) => Promise<T>): Promise<T> {
  return db().transaction({ type: Transaction.TYPES.IMMEDIATE }, work);
}

/**
 * Sales per work id: licences and prints (by quantity) on paid orders, leaving out lines refunded in
 * full (see `itemsSoldByWork` in sales.ts). A work with none is absent and shows 0.
 */
export async function salesCountByWork(): Promise<Map<number, number>> {
  return itemsSoldByWork();
}

// ---------------------------------------------------------------------------------------------
// Rules

const ALT_TEXT_NEEDED = 'Add alt text before publishing: it describes the picture to people who cannot see it.';

/** Business rule (PRODUCT.md): what stops a work from being published, in words for the photographer. */
export function publishBlockers(work: Pick<Work, 'altText'>): string[] {
  return work.altText.trim() === '' ? [ALT_TEXT_NEEDED] : [];
}

/**
 * Business rule (PRODUCT.md): a limited edition's N is fixed once the edition has been on sale, and
 * an edition on sale never changes kind. We keep no history of publish periods, so every edition of
 * a work that has ever been published counts as having been on sale — the safe reading for collectors.
 */
function editionFixed(work: Pick<Work, 'publishedAt'>): boolean {
  return work.publishedAt != null;
}

function gradesOf(work: Work, size: PrintSize, shop: ShopInfo): { fill: PrintGradeResult; fit: PrintGradeResult } {
  const grade = (mode: 'fill' | 'fit') =>
    gradePrint({
      image: { width: work.width, height: work.height },
      print: { width: size.width, height: size.height, unit: size.unit },
      mode,
      focal: { x: work.focalX, y: work.focalY },
      thresholds: shop.thresholds,
    });
  return { fill: grade('fill'), fit: grade('fit') };
}

const ppi = (r: PrintGradeResult) => Math.round(r.effectivePpi);

/**
 * Business rule (PRODUCT.md): a work without a property release (PR-NON) is not sold for commercial
 * use. Withdraws every commercial tier for the work; returns the names of the active tiers this changed.
 */
async function withdrawCommercialTiers(workId: number, transaction: Transaction): Promise<string[]> {
  const tiers = await LicenceTier.findAll({ where: { use: 'commercial' }, transaction });
  const rows = await WorkLicencePrice.findAll({ where: { workId, licenceTierId: { [Op.in]: tiers.map((t) => t.id) } }, transaction });
  const changed: string[] = [];
  for (const tier of tiers) {
    const row = rows.find((r) => r.licenceTierId === tier.id);
    if (row?.mode === 'withdrawn') continue;
    if (row) await row.update({ mode: 'withdrawn', price: null }, { transaction });
    else await WorkLicencePrice.create({ workId, licenceTierId: tier.id, mode: 'withdrawn', price: null }, { transaction });
    if (tier.active) changed.push(tier.name);
  }
  return changed;
}

/** Marks the work as changed when only its rows in other tables were written (same format Sequelize writes). */
async function touchWork(workId: number, transaction: Transaction): Promise<void> {
  await db().query('UPDATE works SET updated_at = :now WHERE id = :id', {
    replacements: { now: new Date().toISOString().replace('T', ' ').replace('Z', ' +00:00'), id: workId },
    transaction,
  });
}

// ---------------------------------------------------------------------------------------------
// Reading

async function seriesChoices(): Promise<SeriesChoice[]> {
  const all = await Series.findAll({ order: [['position', 'ASC'], ['title', 'ASC']] });
  return all.map((s) => ({ id: s.id, title: s.title }));
}

/** Everything the work editor needs, or null when there is no such work. */
export async function getWorkEditor(id: number): Promise<StudioWorkEditor | null> {
  db();
  const work = await Work.findByPk(id, {
    include: [
      { model: WorkLicencePrice, as: 'licencePrices' },
      { model: Edition, as: 'editions' },
      { model: PrintOffer, as: 'offers' },
    ],
  });
  if (!work) return null;
  const [shop, tiers, sizes, papers, series, sales] = await Promise.all([
    getShop(),
    LicenceTier.findAll({ where: { active: true }, order: [['position', 'ASC'], ['id', 'ASC']] }),
    PrintSize.findAll({ where: { active: true }, order: [['position', 'ASC'], ['id', 'ASC']] }),
    Paper.findAll({ where: { active: true }, order: [['position', 'ASC'], ['id', 'ASC']] }),
    seriesChoices(),
    salesCountByWork(),
  ]);
  const activePaperIds = new Set(papers.map((p) => p.id));
  const rules = new Map((work.licencePrices ?? []).map((r) => [r.licenceTierId, r]));
  const editions = new Map((work.editions ?? []).map((e) => [e.printSizeId, e]));
  const fixed = editionFixed(work);
  const commercialOk = commercialAllowed(work.propertyRelease);

  const licences: StudioLicence[] = tiers.map((t) => {
    const rule = rules.get(t.id);
    // A locked tier is shown as what every save and publish stores for it: withdrawn.
    const locked = t.use === 'commercial' && !commercialOk;
    return {
      tierId: t.id, slug: t.slug, name: t.name, use: t.use, summary: t.summary, defaultPrice: t.defaultPrice,
      mode: locked ? 'withdrawn' : rule?.mode ?? 'default',
      price: !locked && rule?.mode === 'override' ? rule.price : null,
      locked,
    };
  });

  const sizeRows: StudioSize[] = sizes.map((size) => {
    const { fill, fit } = gradesOf(work, size, shop);
    const saleGrade = lowestSaleGrade(fill.grade, fit.grade);
    const edition = editions.get(size.id);
    const offers = (work.offers ?? []).filter((o) => o.printSizeId === size.id && o.active && activePaperIds.has(o.paperId));
    const offered = offers.length > 0;
    const offer: SizeOfferInput = {
      sizeId: size.id,
      offered,
      papers: offers.map((o) => o.paperId),
      edition: edition
        ? { kind: edition.kind, total: edition.total, artistProofs: edition.artistProofs }
        : { kind: 'open', total: null, artistProofs: 0 },
      // An offer already on sale at a Wall grade was accepted when it was saved.
      acceptWall: offered && saleGrade === 'wall',
      priceOverrides: offers.filter((o) => o.priceOverride != null).map((o) => ({ paperId: o.paperId, price: o.priceOverride! })),
    };
    return {
      sizeId: size.id, slug: size.slug, label: size.label, unit: size.unit, width: size.width, height: size.height,
      basePrice: size.basePrice,
      fill: { grade: fill.grade, ppi: ppi(fill) },
      fit: { grade: fit.grade, ppi: ppi(fit) },
      saleGrade,
      offerable: fit.grade !== 'too-small',
      edition: edition ? { kind: edition.kind, total: edition.total, artistProofs: edition.artistProofs, fixed } : null,
      offer,
    };
  });

  const reasons = publishBlockers(work);
  return {
    work: {
      id: work.id,
      slug: work.slug,
      status: work.status,
      publishedAt: work.publishedAt ? work.publishedAt.toISOString() : null,
      updatedAt: work.updatedAt.toISOString(),
      width: work.width,
      height: work.height,
      picture: pictureOf(work),
      sales: sales.get(work.id) ?? 0,
    },
    details: {
      title: work.title,
      caption: work.caption,
      altText: work.altText,
      keywords: work.keywords ?? [],
      seriesId: work.seriesId ?? null,
      focal: { x: work.focalX, y: work.focalY },
      // A stored value outside the PLUS vocabulary is shown as no release, the reading the rules use.
      propertyRelease: isPropertyReleaseStatus(work.propertyRelease) ? work.propertyRelease : 'PR-NON',
    },
    series,
    licences,
    papers: papers.map((p) => ({ paperId: p.id, name: p.name, surface: p.surface, weightGsm: p.weightGsm, surchargeBp: p.surchargeBp })),
    sizes: sizeRows,
    shop: { currency: shop.currency, thresholds: shop.thresholds, limitedEditionPremiumBp: shop.limitedEditionPremiumBp },
    publish: { canPublish: reasons.length === 0, reasons },
  };
}

/** The editor data for a work that was just written (it exists: the write found it). */
async function editorAfterWrite(id: number): Promise<StudioWorkEditor> {
  const editor = await getWorkEditor(id);
  if (!editor) throw notFound(id);
  return editor;
}

/** The works table: every work (drafts too), filtered and sorted as the query asks. */
export async function listStudioWorks(query: WorksListQuery): Promise<StudioWorksList> {
  const sequelize = db();
  const where: Record<string | symbol, unknown> = {};
  if (query.status !== 'all') where.status = query.status;
  if (query.series === 'none') where.seriesId = null;
  else if (query.series != null) where.seriesId = query.series;
  if (query.q) {
    const match = ftsQuery(query.q);
    if (!match) return { works: [], series: await seriesChoices() };
    const hits = await sequelize.query<{ id: number }>('SELECT rowid AS id FROM works_fts WHERE works_fts MATCH :match', {
      replacements: { match },
      type: QueryTypes.SELECT,
    });
    where.id = { [Op.in]: hits.map((h) => h.id) };
  }
  const [works, offerCounts, sales, series] = await Promise.all([
    Work.findAll({ where, include: [{ model: Series, as: 'series' }] }),
    sequelize.query<{ workId: number; n: number }>(
      `SELECT o.work_id AS workId, COUNT(*) AS n FROM print_offers o
         JOIN print_sizes s ON s.id = o.print_size_id AND s.active = 1
         JOIN papers p ON p.id = o.paper_id AND p.active = 1
       WHERE o.active = 1 GROUP BY o.work_id`,
      { type: QueryTypes.SELECT },
    ),
    salesCountByWork(),
    seriesChoices(),
  ]);
  const offers = new Map(offerCounts.map((r) => [r.workId, Number(r.n)]));

  const rows: StudioWorkRow[] = works.map((w) => {
    const picture = pictureOf(w);
    const v = variantAtLeast(picture, 160);
    return {
      id: w.id,
      slug: w.slug,
      title: w.title,
      status: w.status,
      publishedAt: w.publishedAt ? w.publishedAt.toISOString() : null,
      updatedAt: w.updatedAt.toISOString(),
      series: w.series ? { id: w.series.id, title: w.series.title } : null,
      thumb: { src: mediaUrl(picture.key, v.name, 'jpeg'), width: v.width, height: v.height, alt: w.altText },
      hasAltText: w.altText.trim() !== '',
      offers: offers.get(w.id) ?? 0,
      sales: sales.get(w.id) ?? 0,
    };
  });

  const text = (a: string, b: string) => a.localeCompare(b, 'en', { sensitivity: 'base', numeric: true });
  const compare: Record<WorksListQuery['sort'], (a: StudioWorkRow, b: StudioWorkRow) => number> = {
    title: (a, b) => text(a.title, b.title),
    status: (a, b) => text(a.status, b.status),
    // Works outside any series sort after every series, whichever the direction.
    series: (a, b) => text(a.series?.title ?? '\uffff', b.series?.title ?? '\uffff'),
    offers: (a, b) => a.offers - b.offers,
    sales: (a, b) => a.sales - b.sales,
    updated: (a, b) => a.updatedAt.localeCompare(b.updatedAt),
  };
  const sign = query.dir === 'asc' ? 1 : -1;
  rows.sort((a, b) => sign * compare[query.sort](a, b) || sign * (a.id - b.id));
  return { works: rows, series };
}

// ---------------------------------------------------------------------------------------------
// Writing

/** Saves some or all of a work's details. */
export async function saveWorkDetails(id: number, patch: WorkDetailsPatch, actor?: AuditActor): Promise<{ message: string; editor: StudioWorkEditor }> {
  const withdrawn = await writeTransaction(async (transaction) => {
    const work = await Work.findByPk(id, { transaction });
    if (!work) throw notFound(id);
    const releaseBefore = work.propertyRelease;
    if (patch.seriesId != null && !(await Series.findByPk(patch.seriesId, { transaction }))) {
      throw new StudioError(422, 'unknown_series', 'That series does not exist.', { seriesId: 'No such series.' });
    }
    if (patch.altText !== undefined && patch.altText === '' && work.status === 'published') {
      // business rule (PRODUCT.md): a published work always has alt text
      throw new StudioError(422, 'alt_text_required', 'A published work needs its alt text. Unpublish it first to clear it.', {
        altText: 'Required while the work is published.',
      });
    }
    if (patch.title !== undefined) work.title = patch.title;
    if (patch.caption !== undefined) work.caption = patch.caption;
    if (patch.altText !== undefined) work.altText = patch.altText;
    if (patch.keywords !== undefined) work.keywords = patch.keywords;
    if (patch.seriesId !== undefined) work.seriesId = patch.seriesId;
    if (patch.propertyRelease !== undefined) work.propertyRelease = patch.propertyRelease;
    if (patch.focal !== undefined) {
      work.focalX = patch.focal.x;
      work.focalY = patch.focal.y;
    }
    await work.save({ transaction });
    const withdrawnTiers = commercialAllowed(work.propertyRelease) ? [] : await withdrawCommercialTiers(work.id, transaction);
    if (actor && releaseBefore !== work.propertyRelease) {
      await recordAudit(actor, { action: 'work.rights', subjectType: 'work', subjectId: work.id, before: { propertyRelease: releaseBefore }, after: { propertyRelease: work.propertyRelease, withdrawn: withdrawnTiers } }, transaction);
    }
    return withdrawnTiers;
  });
  const message = withdrawn.length
    ? `Details saved. Without a property release, ${withdrawn.join(' and ')} ${withdrawn.length === 1 ? 'is' : 'are'} now withdrawn.`
    : 'Details saved.';
  return { message, editor: await editorAfterWrite(id) };
}

/** Saves the work's rule for each tier sent: the tier's default, the work's own price, or withdrawn. */
export async function saveLicencePrices(id: number, input: LicencePricesInput, actor?: AuditActor): Promise<{ message: string; editor: StudioWorkEditor }> {
  await writeTransaction(async (transaction) => {
    const work = await Work.findByPk(id, { transaction });
    if (!work) throw notFound(id);
    const tiers = await LicenceTier.findAll({ where: { id: { [Op.in]: input.tiers.map((t) => t.tierId) } }, transaction });
    const tierById = new Map(tiers.map((t) => [t.id, t]));
    const fields: Record<string, string> = {};
    input.tiers.forEach((t, i) => {
      if (!tierById.has(t.tierId)) fields[`tiers.${i}.tierId`] = 'No such licence tier.';
    });
    if (Object.keys(fields).length) throw new StudioError(422, 'unknown_tier', 'A licence tier in the request does not exist.', fields);

    if (!commercialAllowed(work.propertyRelease)) {
      // business rule (PRODUCT.md): PR-NON keeps commercial tiers withdrawn until the release status changes
      input.tiers.forEach((t, i) => {
        const tier = tierById.get(t.tierId)!;
        if (tier.use === 'commercial' && t.mode !== 'withdrawn') fields[`tiers.${i}.mode`] = `${tier.name} needs a property release.`;
      });
      if (Object.keys(fields).length) {
        throw new StudioError(422, 'release_required',
          'Commercial tiers stay withdrawn while the work has no property release. Change the release status first.', fields);
      }
    }

    const rows = await WorkLicencePrice.findAll({ where: { workId: id }, transaction });
    const rule = (tierId: number, r?: { mode: string; price: number | null }) => `${tierById.get(tierId)?.name ?? tierId}: ${r ? (r.mode === 'override' ? r.price : r.mode) : 'default'}`;
    const before = input.tiers.map((t) => rule(t.tierId, rows.find((r) => r.licenceTierId === t.tierId)));
    const after = input.tiers.map((t) => rule(t.tierId, t.mode === 'default' ? undefined : { mode: t.mode, price: t.mode === 'override' ? t.price! : null }));
    if (actor && JSON.stringify(before) !== JSON.stringify(after)) {
      await recordAudit(actor, { action: 'price.licence', subjectType: 'work', subjectId: id, before: { prices: before }, after: { prices: after } }, transaction);
    }
    for (const t of input.tiers) {
      const row = rows.find((r) => r.licenceTierId === t.tierId);
      if (t.mode === 'default') {
        if (row) await row.destroy({ transaction });
        continue;
      }
      const values = { mode: t.mode, price: t.mode === 'override' ? t.price! : null };
      if (row) await row.update(values, { transaction });
      else await WorkLicencePrice.create({ workId: id, licenceTierId: t.tierId, ...values }, { transaction });
    }
    await touchWork(id, transaction);
  });
  return { message: 'Licence prices saved.', editor: await editorAfterWrite(id) };
}

interface Issue { status: 409 | 422; code: string; path: string; message: string }

/** Saves which sizes and papers the work is offered on, and each size's edition. */
export async function savePrintOffers(id: number, input: PrintOffersInput, actor?: AuditActor): Promise<{ message: string; editor: StudioWorkEditor }> {
  const shop = await getShop();
  const onOffer = await writeTransaction(async (transaction) => {
    const work = await Work.findByPk(id, { transaction });
    if (!work) throw notFound(id);
    const sizeIds = input.sizes.map((s) => s.sizeId);
    const paperIds = [...new Set(input.sizes.flatMap((s) => (s.offered ? s.papers : [])))];
    const [sizes, papers, editions, offers] = await Promise.all([
      PrintSize.findAll({ where: { id: { [Op.in]: sizeIds } }, transaction }),
      Paper.findAll({ where: { id: { [Op.in]: paperIds } }, transaction }),
      Edition.findAll({ where: { workId: id }, transaction }),
      PrintOffer.findAll({ where: { workId: id }, transaction }),
    ]);
    const sizeById = new Map(sizes.map((s) => [s.id, s]));
    const paperById = new Map(papers.map((p) => [p.id, p]));
    const fixed = editionFixed(work);
    // Taken before anything below changes these instances.
    const beforeSummary = summariseOffers(editions.map((e) => e.get({ plain: true })), offers.map((o) => o.get({ plain: true })));

    const issues: Issue[] = [];
    const issue = (status: Issue['status'], code: string, path: string, message: string) => issues.push({ status, code, path, message });
    input.sizes.forEach((s, i) => {
      const size = sizeById.get(s.sizeId);
      if (!size) return issue(422, 'unknown_size', `sizes.${i}.sizeId`, 'No such print size.');
      if (!s.offered) return;
      if (!size.active) return issue(422, 'size_retired', `sizes.${i}.offered`, `${size.label} is no longer printed by the lab.`);
      s.papers.forEach((paperId, j) => {
        const paper = paperById.get(paperId);
        if (!paper) issue(422, 'unknown_paper', `sizes.${i}.papers.${j}`, 'No such paper.');
        else if (!paper.active) issue(422, 'paper_retired', `sizes.${i}.papers.${j}`, `${paper.name} is no longer stocked.`);
      });

      const { fill, fit } = gradesOf(work, size, shop);
      if (fit.grade === 'too-small') {
        // business rule (PRODUCT.md): a size the file cannot hold even with a border is never offered
        issue(422, 'too_small', `sizes.${i}.offered`,
          `${size.label} cannot be offered: the file holds only ${ppi(fit)} ppi there even with a border (${GRADE_LABEL['too-small']}).`);
        return;
      }
      if (lowestSaleGrade(fill.grade, fit.grade) === 'wall' && !s.acceptWall) {
        // business rule (PRODUCT.md): selling a Wall-grade print is a choice the photographer confirms
        const at = fill.grade === 'wall' ? `${ppi(fill)} ppi cropped` : `${ppi(fit)} ppi with a border`;
        issue(422, 'wall_not_accepted', `sizes.${i}.acceptWall`,
          `${size.label} is ${GRADE_LABEL.wall} grade (${at}): tick “accept Wall” to offer it.`);
      }

      const e = s.edition;
      if (e.kind === 'limited' && e.total != null && e.artistProofs > maxArtistProofs(e.total)) {
        // common practice (TRADE-FACTS §8.2): artist's proofs at most 10 % of N, rounded down
        issue(422, 'too_many_proofs', `sizes.${i}.edition.artistProofs`,
          `${size.label}: at most ${maxArtistProofs(e.total)} artist’s proofs for an edition of ${e.total}.`);
      }
      const stored = editions.find((ed) => ed.printSizeId === size.id);
      if (stored && fixed) {
        // business rule (PRODUCT.md): N is fixed when the edition opens and is never raised
        if (stored.kind !== e.kind) {
          issue(409, 'edition_fixed', `sizes.${i}.edition.kind`,
            `${size.label}: the ${stored.kind} edition has been on sale, so it stays ${stored.kind}.`);
        } else if (stored.kind === 'limited' && e.total! > stored.total!) {
          issue(409, 'edition_fixed', `sizes.${i}.edition.total`,
            `${size.label}: the edition of ${stored.total} has been on sale; N can be lowered but never raised.`);
        }
      }
    });
    if (issues.length) {
      const first = issues.find((x) => x.status === 409) ?? issues[0]!;
      const fields = Object.fromEntries(issues.map((x) => [x.path, x.message]));
      throw new StudioError(first.status, first.code, issues.map((x) => x.message).join(' '), fields);
    }

    for (const s of input.sizes) {
      const atSize = offers.filter((o) => o.printSizeId === s.sizeId);
      if (!s.offered) {
        // Offers are kept (orders will point at them) but taken off sale; the edition stays as it was.
        for (const o of atSize) if (o.active) await o.update({ active: false }, { transaction });
        continue;
      }
      const values = s.edition.kind === 'limited'
        ? { kind: 'limited' as const, total: s.edition.total!, artistProofs: s.edition.artistProofs }
        : { kind: 'open' as const, total: null, artistProofs: 0 };
      // Lowering N below the prints already sold needs order lines; the checkout issue adds that check.
      let edition = editions.find((ed) => ed.printSizeId === s.sizeId);
      if (edition) await edition.update(values, { transaction });
      else edition = await Edition.create({ workId: id, printSizeId: s.sizeId, ...values }, { transaction });

      const overrides = new Map((s.priceOverrides ?? []).map((o) => [o.paperId, o.price]));
      for (const paperId of s.papers) {
        const o = atSize.find((x) => x.paperId === paperId);
        const next = { active: true, editionId: edition.id, priceOverride: overrides.get(paperId) ?? null };
        if (o) await o.update(next, { transaction });
        else await PrintOffer.create({ workId: id, printSizeId: s.sizeId, paperId, ...next }, { transaction });
      }
      for (const o of atSize) if (!s.papers.includes(o.paperId) && o.active) await o.update({ active: false }, { transaction });
    }
    await touchWork(id, transaction);
    if (actor) {
      const after = await offerSummary(id, transaction);
      if (JSON.stringify(beforeSummary) !== JSON.stringify(after)) {
        await recordAudit(actor, { action: 'price.print', subjectType: 'work', subjectId: id, before: beforeSummary, after }, transaction);
      }
    }
    const live = await PrintOffer.findAll({ where: { workId: id, active: true }, attributes: ['printSizeId'], transaction });
    return new Set(live.map((o) => o.printSizeId)).size;
  });
  const message = onOffer === 0 ? 'Print offers saved: no size is on offer.' : `Print offers saved: ${onOffer} ${onOffer === 1 ? 'size' : 'sizes'} on offer.`;
  return { message, editor: await editorAfterWrite(id) };
}

type EditionRow = { printSizeId: number; kind: string; total: number | null; artistProofs: number };
type OfferRow = { printSizeId: number; paperId: number; active: boolean; priceOverride: number | null };

/** Offers and editions as the audit trail keeps them: one readable entry per size. */
function summariseOffers(editions: EditionRow[], offers: OfferRow[]): { editions: string[]; offers: string[] } {
  return {
    editions: editions.map((e) => `size ${e.printSizeId}: ${e.kind === 'limited' ? `${e.total} + ${e.artistProofs} AP` : 'open'}`).sort(),
    offers: offers.filter((o) => o.active).map((o) => `size ${o.printSizeId} paper ${o.paperId}: ${o.priceOverride ?? 'standard price'}`).sort(),
  };
}

async function offerSummary(workId: number, transaction: Transaction) {
  const [editions, offers] = await Promise.all([
    Edition.findAll({ where: { workId }, transaction, raw: true }),
    PrintOffer.findAll({ where: { workId }, transaction, raw: true }),
  ]);
  return summariseOffers(editions as unknown as EditionRow[], offers as unknown as OfferRow[]);
}

type PublishOutcome = Extract<BulkOutcome, 'published' | 'already-published' | 'needs-alt-text' | 'unpublished' | 'already-draft'>;

/** Publishes or unpublishes one work inside a transaction; never throws for a broken rule. */
async function setPublished(work: Work, publish: boolean, transaction: Transaction): Promise<PublishOutcome> {
  if (!publish) {
    if (work.status === 'draft') return 'already-draft';
    await work.update({ status: 'draft' }, { transaction });
    return 'unpublished';
  }
  // business rule (PRODUCT.md): alt text is required before publishing
  if (publishBlockers(work).length) return 'needs-alt-text';
  if (!commercialAllowed(work.propertyRelease)) await withdrawCommercialTiers(work.id, transaction);
  if (work.status === 'published') return 'already-published';
  await work.update({ status: 'published', publishedAt: work.publishedAt ?? new Date() }, { transaction });
  return 'published';
}

const PUBLISH_MESSAGE: Record<PublishOutcome, string> = {
  published: 'Published: the work is in the Gallery now.',
  'already-published': 'The work was already published.',
  'needs-alt-text': ALT_TEXT_NEEDED,
  unpublished: 'Back to draft: the work is no longer in the Gallery.',
  'already-draft': 'The work was already a draft.',
};

/** Publishes (first time: sets publishedAt) or returns the work to draft. */
export async function publishWork(id: number, publish: boolean): Promise<{ message: string; editor: StudioWorkEditor }> {
  const outcome = await writeTransaction(async (transaction) => {
    const work = await Work.findByPk(id, { transaction });
    if (!work) throw notFound(id);
    return setPublished(work, publish, transaction);
  });
  if (outcome === 'needs-alt-text') {
    throw new StudioError(422, 'alt_text_required', ALT_TEXT_NEEDED, { altText: 'Required before publishing.' });
  }
  return { message: PUBLISH_MESSAGE[outcome], editor: await editorAfterWrite(id) };
}

const BULK_MESSAGE: Record<BulkOutcome, string> = {
  ...PUBLISH_MESSAGE,
  'needs-alt-text': 'Needs alt text before it can be published.',
  assigned: 'Series changed.',
  'not-found': 'There is no such work.',
};

/** Words for "n works <did this>", for the summary line. */
const SUMMARY_WORDS: Record<BulkOutcome, (n: number) => string> = {
  published: (n) => `${n} published`,
  'already-published': (n) => `${n} already published`,
  'needs-alt-text': (n) => `${n} ${n === 1 ? 'needs' : 'need'} alt text`,
  unpublished: (n) => `${n} back to draft`,
  'already-draft': (n) => `${n} already ${n === 1 ? 'a draft' : 'drafts'}`,
  assigned: (n) => `${n} moved`,
  'not-found': (n) => `${n} not found`,
};

/** Applies one action to many works in one transaction; each work answers for itself. */
export async function bulkAction(input: BulkInput): Promise<BulkAnswer> {
  return writeTransaction(async (transaction) => {
    let series: Series | null = null;
    if (input.action === 'assign-series' && input.seriesId != null) {
      series = await Series.findByPk(input.seriesId, { transaction });
      if (!series) throw new StudioError(422, 'unknown_series', 'That series does not exist.', { seriesId: 'No such series.' });
    }
    const works = await Work.findAll({ where: { id: { [Op.in]: input.ids } }, transaction });
    const byId = new Map(works.map((w) => [w.id, w]));
    const results: BulkRowResult[] = [];
    for (const id of input.ids) {
      const work = byId.get(id);
      let outcome: BulkOutcome;
      if (!work) outcome = 'not-found';
      else if (input.action === 'assign-series') {
        await work.update({ seriesId: series?.id ?? null }, { transaction });
        outcome = 'assigned';
      } else outcome = await setPublished(work, input.action === 'publish', transaction);
      const ok = outcome !== 'not-found' && outcome !== 'needs-alt-text';
      let message = BULK_MESSAGE[outcome];
      if (outcome === 'assigned') message = series ? `Now in “${series.title}”.` : 'Now outside any series.';
      results.push({ id, title: work?.title ?? null, ok, outcome, message });
    }
    const counts = new Map<BulkOutcome, number>();
    for (const r of results) counts.set(r.outcome, (counts.get(r.outcome) ?? 0) + 1);
    const order = Object.keys(SUMMARY_WORDS) as BulkOutcome[];
    const parts = [...counts].sort(([a], [b]) => order.indexOf(a) - order.indexOf(b)).map(([outcome, n]) =>
      outcome === 'assigned' ? `${n} ${series ? `moved to “${series.title}”` : 'taken out of their series'}` : SUMMARY_WORDS[outcome](n));
    return { action: input.action, results, summary: parts.join('; ') };
  });
}
