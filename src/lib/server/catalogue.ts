/** Read-side of the catalogue: loads what Gallery pages and the cart quote need, as plain objects. */
import { Op, QueryTypes } from 'sequelize';
import { db } from './db';
import { Edition, LicenceTier, Paper, PrintOffer, PrintSize, Series, ShopSettings, Work, WorkLicencePrice } from './models';
import type { PictureData } from '../media';
import type { GradeThresholds } from '../print-grade';
import type { LicenceOption, SeriesSummary, SizeOption, WorkCard, WorkDetail } from '../catalogue-types';
import type { Orientation } from '../catalogue-types';

export type * from '../catalogue-types';
import { licencePrice, printPrice, type LicencePriceRule } from '../pricing';
import { perCatalogueVersion, perCatalogueVersionKeyed } from './catalogue-version';

/** A work's stored licence rule (or none) as the pricing module's rule. */
export function licenceRuleOf(row: WorkLicencePrice | undefined): LicencePriceRule {
  if (!row) return { mode: 'default' };
  return row.mode === 'withdrawn' ? { mode: 'withdrawn' } : { mode: 'override', price: row.price! };
}

/** The price of one print offer from its size, paper and edition, unless the offer has its own. */
export function offerPrice(offer: PrintOffer, size: PrintSize, paper: Paper, edition: Edition, limitedEditionPremiumBp: number): number {
  return printPrice({
    sizeBasePrice: size.basePrice,
    paperSurchargeBp: paper.surchargeBp,
    editionPremiumBp: edition.kind === 'limited' ? limitedEditionPremiumBp : 0,
    override: offer.priceOverride,
  });
}

export interface ShopInfo {
  shopName: string;
  photographerName: string;
  tagline: string;
  currency: string;
  thresholds: GradeThresholds;
  limitedEditionPremiumBp: number;
}

export class NotConfiguredError extends Error {}

/**
 * The Gallery's reads below are kept per catalogue version (see catalogue-version.ts): every page asks for
 * the shop, and Gallery pages for the same works, far more often than the catalogue changes. Callers get
 * shared plain objects and must not change them.
 */
export const getShop = perCatalogueVersion(loadShop);

async function loadShop(): Promise<ShopInfo> {
  db();
  const s = await ShopSettings.findByPk(1);
  if (!s) throw new NotConfiguredError('The shop has no settings yet: run `npm run seed`.');
  return {
    shopName: s.shopName,
    photographerName: s.photographerName,
    tagline: s.tagline,
    currency: s.currency,
    thresholds: { targetPpi: s.targetPpi, floorPpi: s.floorPpi, wallFloorPpi: s.wallFloorPpi, viewingDistanceFactor: s.viewingDistanceFactor },
    limitedEditionPremiumBp: s.limitedEditionPremiumBp,
  };
}


export function pictureOf(work: Work): PictureData {
  return {
    key: work.derivatives.key,
    formats: work.derivatives.formats,
    variants: work.derivatives.variants,
    placeholder: work.placeholder,
    dominantColor: work.dominantColor,
    alt: work.altText,
    width: work.width,
    height: work.height,
  };
}

function toCard(work: Work): WorkCard {
  return {
    id: work.id,
    slug: work.slug,
    title: work.title,
    width: work.width,
    height: work.height,
    orientation: work.orientation,
    series: work.series ? { slug: work.series.slug, title: work.series.title } : null,
    picture: pictureOf(work),
  };
}

const published = { status: 'published' } as const;
const newestFirst: [string, string][] = [['publishedAt', 'DESC'], ['id', 'DESC']];

export const latestWorks = perCatalogueVersionKeyed(loadLatestWorks, (limit = 24) => String(limit));

async function loadLatestWorks(limit = 24): Promise<WorkCard[]> {
  db();
  const works = await Work.findAll({ where: published, include: [{ model: Series, as: 'series' }], order: newestFirst, limit });
  return works.map(toCard);
}


export const listSeries = perCatalogueVersion(loadSeriesList);

async function loadSeriesList(): Promise<SeriesSummary[]> {
  db();
  const all = await Series.findAll({
    order: [['position', 'ASC']],
    include: [{ model: Work, as: 'works', where: published, required: false }],
  });
  return all
    .map((s) => {
      const works = [...(s.works ?? [])].sort((a, b) => (b.publishedAt?.getTime() ?? 0) - (a.publishedAt?.getTime() ?? 0));
      return {
        slug: s.slug,
        title: s.title,
        description: s.description,
        workCount: works.length,
        cover: works[0] ? toCard(Object.assign(works[0], { series: s })) : null,
      };
    })
    .filter((s) => s.workCount > 0);
}

export const getSeries = perCatalogueVersionKeyed(loadSeries, (slug: string) => slug);

async function loadSeries(slug: string): Promise<{ slug: string; title: string; description: string; works: WorkCard[] } | null> {
  db();
  const series = await Series.findOne({ where: { slug } });
  if (!series) return null;
  const works = await Work.findAll({ where: { ...published, seriesId: series.id }, order: newestFirst });
  return {
    slug: series.slug,
    title: series.title,
    description: series.description,
    works: works.map((w) => toCard(Object.assign(w, { series }))),
  };
}

export interface SearchFilters {
  q?: string;
  orientation?: Orientation;
  series?: string;
}

/** Turns what a buyer typed into a safe FTS5 query: each word a quoted prefix term, all required. */
export function ftsQuery(text: string): string | null {
  const words = text
    .normalize('NFKC')
    .toLowerCase()
    .match(/[\p{L}\p{N}]+/gu);
  if (!words?.length) return null;
  return words.slice(0, 12).map((w) => `"${w}"*`).join(' ');
}

export async function searchWorks(filters: SearchFilters): Promise<WorkCard[]> {
  const sequelize = db();
  const where: Record<string | symbol, unknown> = { ...published };
  if (filters.orientation) where.orientation = filters.orientation;
  if (filters.series) {
    const series = await Series.findOne({ where: { slug: filters.series } });
    if (!series) return [];
    where.seriesId = series.id;
  }
  let order = newestFirst as [string, string][];
  let rankedIds: number[] | null = null;
  const match = filters.q ? ftsQuery(filters.q) : null;
  if (filters.q && !match) return [];
  if (match) {
    const rows = await sequelize.query<{ id: number }>(
      'SELECT rowid AS id FROM works_fts WHERE works_fts MATCH :match ORDER BY bm25(works_fts, 10.0, 3.0, 5.0, 1.0) LIMIT 200',
      { replacements: { match }, type: QueryTypes.SELECT },
    );
    rankedIds = rows.map((r) => r.id);
    where.id = { [Op.in]: rankedIds };
  }
  const works = await Work.findAll({ where, include: [{ model: Series, as: 'series' }], order });
  if (rankedIds) {
    const rank = new Map(rankedIds.map((id, i) => [id, i]));
    works.sort((a, b) => rank.get(a.id)! - rank.get(b.id)!);
  }
  return works.map(toCard);
}





export const getPublishedWork = perCatalogueVersionKeyed(loadPublishedWork, (slug: string) => slug);

async function loadPublishedWork(slug: string): Promise<WorkDetail | null> {
  db();
  // The three lists are read by queries of their own (separate): in one join they multiply into a row per
  // edition × offer × price, each carrying the whole work, which Sequelize then has to fold back together.
  const work = await Work.findOne({
    where: { ...published, slug },
    include: [
      { model: Series, as: 'series' },
      { model: WorkLicencePrice, as: 'licencePrices', separate: true },
      { model: Edition, as: 'editions', separate: true },
      { model: PrintOffer, as: 'offers', where: { active: true }, required: false, separate: true },
    ],
  });
  if (!work) return null;
  const shop = await getShop();
  const [tiers, sizes, papers] = await Promise.all([
    LicenceTier.findAll({ where: { active: true }, order: [['position', 'ASC']] }),
    PrintSize.findAll({ where: { active: true }, order: [['position', 'ASC']] }),
    Paper.findAll({ where: { active: true }, order: [['position', 'ASC']] }),
  ]);
  const paperById = new Map(papers.map((p) => [p.id, p]));
  const rules = new Map((work.licencePrices ?? []).map((r) => [r.licenceTierId, r]));
  const editions = new Map((work.editions ?? []).map((e) => [e.printSizeId, e]));

  const licences: LicenceOption[] = tiers.map((t) => {
    const price = licencePrice(t.defaultPrice, licenceRuleOf(rules.get(t.id)));
    return {
      tierId: t.id, slug: t.slug, name: t.name, use: t.use, summary: t.summary, terms: t.terms, media: t.media,
      cap: t.cap, capUnit: t.capUnit, territory: t.territory, termMonths: t.termMonths, price,
    };
  });

  const sizeOptions: SizeOption[] = sizes.map((size) => {
    const edition = editions.get(size.id);
    const offers = (work.offers ?? [])
      .filter((o) => o.printSizeId === size.id && paperById.has(o.paperId) && edition)
      .map((o) => ({
        offerId: o.id,
        paperId: o.paperId,
        price: offerPrice(o, size, paperById.get(o.paperId)!, edition!, shop.limitedEditionPremiumBp),
      }))
      .sort((a, b) => a.price - b.price);
    return {
      sizeId: size.id, slug: size.slug, label: size.label, unit: size.unit, width: size.width, height: size.height,
      edition: edition ? { kind: edition.kind, total: edition.total, artistProofs: edition.artistProofs } : null,
      offers,
    };
  });

  return {
    ...toCard(work),
    caption: work.caption,
    keywords: work.keywords,
    notes: work.notes,
    capture: work.capture,
    focal: { x: work.focalX, y: work.focalY },
    licences,
    sizes: sizeOptions,
    papers: papers.map((p) => ({ paperId: p.id, slug: p.slug, name: p.name, surface: p.surface, weightGsm: p.weightGsm, description: p.description })),
  };
}
