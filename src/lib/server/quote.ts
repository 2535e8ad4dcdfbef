/** Prices a cart from the database. The client's idea of a price is never read, only ids and choices. */
import { Op } from 'sequelize';
import { db } from './db';
import { Edition, LicenceQuote, LicenceTier, Paper, PrintOffer, PrintSize, Work, WorkLicencePrice } from './models';
import { quoteRefusal } from './licence-quotes';
import { termsSummary } from '../quote-schemas';
import { getShop, licenceRuleOf, offerPrice, pictureOf } from './catalogue';
import { lineKey, type CartLineInput, type CartQuote, type QuotedLine, type QuotedLineOk } from '../cart';
import { licencePrice, lineSubtotal } from '../pricing';
import { GRADE_LABEL, gradePrint } from '../print-grade';
import { mediaUrl, variantAtLeast } from '../media';
import { sumMinor } from '../money';
import { perCatalogueVersion } from './catalogue-version';

/**
 * Everything a price is made from (works, tiers, a work's licence rules, print offers with their size,
 * paper and edition, the shop's settings), loaded once per catalogue version: a quote is asked for on
 * every cart view and checkout, and the catalogue changes rarely. Read only.
 */
const pricingCatalogue = perCatalogueVersion(async () => {
  const [shop, works, tiers, rules, offers] = await Promise.all([
    getShop(),
    Work.findAll(),
    LicenceTier.findAll(),
    WorkLicencePrice.findAll(),
    PrintOffer.findAll({
      include: [
        { model: PrintSize, as: 'size' },
        { model: Paper, as: 'paper' },
        { model: Edition, as: 'edition' },
      ],
    }),
  ]);
  return {
    shop,
    workById: new Map(works.map((w) => [w.id, w])),
    tierById: new Map(tiers.map((t) => [t.id, t])),
    ruleByWorkAndTier: new Map(rules.map((r) => [`${r.workId}:${r.licenceTierId}`, r])),
    offerById: new Map(offers.map((o) => [o.id, o])),
  };
});

function thumbOf(work: Work): QuotedLineOk['thumb'] {
  const picture = pictureOf(work);
  const v = variantAtLeast(picture, 240);
  return { src: mediaUrl(picture.key, v.name, 'jpeg'), width: v.width, height: v.height, alt: work.altText };
}

function capText(cap: number | null, unit: string | null): string {
  return cap == null ? 'no cap' : `up to ${cap.toLocaleString('en-GB')} ${unit ?? ''}`.trim();
}

/** Prices the cart; quoted licence lines only for `userId`, the account that asked for them (null: signed out). */
export async function quoteCart(lines: CartLineInput[], userId: string | null = null): Promise<CartQuote> {
  db();
  const { shop, workById, tierById, ruleByWorkAndTier, offerById } = await pricingCatalogue();
  const quoteLines = lines.filter((l) => l.kind === 'quote');
  const quotes = quoteLines.length && userId ? await LicenceQuote.findAll({ where: { id: { [Op.in]: quoteLines.map((l) => l.quoteId) }, userId } }) : [];
  const quoteById = new Map(quotes.map((q) => [q.id, q]));

  const quoted: QuotedLine[] = lines.map((line): QuotedLine => {
    const key = lineKey(line);
    const fail = (error: string): QuotedLine => ({ key, ok: false, kind: line.kind, error });
    if (line.kind === 'quote') {
      const quote = quoteById.get(line.quoteId);
      const refusal = quoteRefusal(quote, userId, shop.currency);
      if (refusal) return fail(refusal);
      const work = workById.get(quote!.workId);
      if (!work || work.status !== 'published') return fail('This work is not on sale any more.');
      return {
        key, ok: true, kind: 'quote', workSlug: work.slug, workTitle: work.title, thumb: thumbOf(work),
        description: quote!.terms!.tierName, detail: termsSummary(quote!.terms!),
        unitPrice: quote!.price!, quantity: 1, subtotal: quote!.price!,
      };
    }
    if (line.kind === 'licence') {
      const work = workById.get(line.workId);
      if (!work || work.status !== 'published') return fail('This work is not on sale any more.');
      const tier = tierById.get(line.tierId);
      if (!tier || !tier.active) return fail('This licence is no longer offered.');
      const rule = ruleByWorkAndTier.get(`${work.id}:${tier.id}`);
      const price = licencePrice(tier.defaultPrice, licenceRuleOf(rule));
      if (price == null) return fail(`${tier.name} is not available for “${work.title}”.`);
      const term = tier.termMonths ? `${tier.termMonths} months` : 'no end date';
      return {
        key, ok: true, kind: 'licence', workSlug: work.slug, workTitle: work.title, thumb: thumbOf(work),
        description: `Licence: ${tier.name}`,
        detail: `${tier.media}; ${capText(tier.cap, tier.capUnit)}; ${tier.territory}; ${term}`,
        unitPrice: price, quantity: 1, subtotal: price,
      };
    }

    const offer = offerById.get(line.offerId);
    const work = offer && workById.get(offer.workId);
    if (!offer || !work || work.status !== 'published') return fail('This print is not on sale any more.');
    const { size, paper, edition } = offer;
    if (!offer.active || !size?.active || !paper?.active || !edition) return fail('This print is no longer offered.');
    const grade = gradePrint({
      image: { width: work.width, height: work.height },
      print: { width: size.width, height: size.height, unit: size.unit },
      mode: line.mode,
      focal: { x: work.focalX, y: work.focalY },
      thresholds: shop.thresholds,
    });
    if (grade.grade === 'too-small') {
      return fail(`The file is too small for ${size.label} with ${line.mode === 'fill' ? 'the crop' : 'a border'} (${Math.round(grade.effectivePpi)} ppi).`);
    }
    if (edition.kind === 'limited' && line.quantity > edition.total!) {
      return fail(`This edition has only ${edition.total} prints.`);
    }
    const unitPrice = offerPrice(offer, size, paper, edition, shop.limitedEditionPremiumBp);
    const editionText = edition.kind === 'limited' ? `limited edition of ${edition.total}` : 'open edition';
    return {
      key, ok: true, kind: 'print', workSlug: work.slug, workTitle: work.title, thumb: thumbOf(work),
      description: `Print: ${size.label}, ${paper.name}`,
      detail: `${line.mode === 'fill' ? 'Cropped to fill the paper' : 'Whole picture with a border'}; ${GRADE_LABEL[grade.grade]}, ${Math.round(grade.effectivePpi)} ppi; ${editionText}`,
      unitPrice, quantity: line.quantity, subtotal: lineSubtotal({ unitPrice, quantity: line.quantity }),
    };
  });

  const ok = quoted.filter((l): l is QuotedLineOk => l.ok);
  const subtotal = sumMinor(ok.map((l) => l.subtotal));
  return {
    currency: shop.currency,
    lines: quoted,
    itemCount: ok.reduce((n, l) => n + l.quantity, 0),
    subtotal,
    // Shipping and tax are added at checkout, once the buyer's address is known.
    total: subtotal,
  };
}
