/**
 * Custom licence quotes: a buyer's enquiry, the Studio's answer or refusal (each with its audit row in
 * the same transaction), the buyer's own view, and the checks that checkout and payment make before a
 * quoted licence is sold — once.
 */
import crypto from 'node:crypto';
import { Op, QueryTypes, type Transaction } from 'sequelize';
import { db } from './db';
import { config } from './config';
import { sendMail } from './mail';
import { escapeHtml } from './mail-templates';
import { recordAudit, type AuditActor } from './audit';
import { getShop, pictureOf } from './catalogue';
import { LicenceQuote, Order, ShopSettings, Work } from './models';
import type { QuotedTerms, QuoteRequest } from './models/LicenceQuote';
import type { SessionUser } from './auth-types';
import { commercialAllowed } from '../studio-schemas';
import { mediaUrl, variantAtLeast } from '../media';
import { formatMoney } from '../money';
import {
  customLicenceName, EXCLUSIVITY_LABEL, formatDay, MAX_ENQUIRIES_PER_DAY, MAX_OPEN_ENQUIRIES, QUOTE_ID_PATTERN, quoteExpiry,
  quoteState, termsSummary, termText, USE_LABEL, type AnswerData, type EnquiryInput, type QuoteView,
} from '../quote-schemas';

export class QuoteError extends Error {
  constructor(readonly status: number, readonly code: string, message: string, readonly fields?: Record<string, string>) {
    super(message);
  }
}

/** Quote ids are not guessable: 120 random bits in base32, like licence ids, with their own prefix. */
export function newQuoteId(): string {
  const alphabet = 'ABCDEFGHJKLMNPQRSTUVWXYZ23456789';
  const bytes = crypto.randomBytes(24);
  return `SMQ-${Array.from(bytes, (b) => alphabet[b % alphabet.length]).join('').replace(/(.{6})(?=.)/g, '$1-')}`;
}

const RELEASE_MESSAGE = 'This work is not licensed for commercial use: it shows property without a release. Ask for editorial use instead.';

function thumbOf(work: Work): QuoteView['work']['thumb'] {
  if (!work.derivatives?.variants?.length) return null;
  const picture = pictureOf(work);
  const v = variantAtLeast(picture, 240);
  return { src: mediaUrl(picture.key, v.name, 'jpeg'), width: v.width, height: v.height, alt: work.altText };
}

async function view(q: LicenceQuote, now = new Date()): Promise<QuoteView> {
  const work = q.work ?? (await Work.findByPk(q.workId));
  const order = q.orderId ? await Order.findByPk(q.orderId, { attributes: ['number'] }) : null;
  return {
    id: q.id,
    state: quoteState(q, now),
    work: work
      ? { id: work.id, slug: work.slug, title: work.title, published: work.status === 'published', thumb: thumbOf(work) }
      : { id: q.workId, slug: '', title: 'A withdrawn work', published: false, thumb: null },
    email: q.email,
    licenseeName: q.licenseeName,
    licenseeOrganisation: q.licenseeOrganisation,
    request: q.request,
    terms: q.terms,
    price: q.price,
    currency: q.currency,
    reply: q.reply,
    createdAt: q.createdAt.toISOString(),
    answeredAt: q.answeredAt ? q.answeredAt.toISOString() : null,
    expiresAt: q.expiresAt ? q.expiresAt.toISOString() : null,
    orderNumber: order?.number ?? null,
  };
}

async function shopName(): Promise<string> {
  return (await ShopSettings.findByPk(1))?.shopName ?? 'Stillmark';
}

/** Every photographer and admin account that is not disabled: the studio's people. */
async function studioAddresses(): Promise<string[]> {
  const rows = await db().query<{ email: string }>(
    "SELECT email FROM users WHERE role IN ('photographer', 'admin') AND (banned IS NULL OR banned = 0) ORDER BY created_at",
    { type: QueryTypes.SELECT },
  );
  return [...new Set(rows.map((r) => r.email))];
}

/** Mail is sent after the change is committed; a relay that fails is logged, and the change stands. */
async function sendQuietly(mails: { to: string; subject: string; text: string; html?: string }[]): Promise<void> {
  const results = await Promise.allSettled(mails.map((m) => sendMail(m)));
  for (const r of results) if (r.status === 'rejected') console.error('licence quote mail failed', r.reason);
}

function mailHtml(paragraphs: string[], link: { label: string; url: string }): string {
  return `${paragraphs.map((p) => `<p>${escapeHtml(p).replace(/\n/g, '<br>')}</p>`).join('')}<p><a href="${escapeHtml(link.url)}">${escapeHtml(link.label)}</a></p>`;
}

// ------------------------------------------------------------------------------------ the enquiry

/** True when the work may be licensed for commercial use at all (it has a release, or needs none). */
export async function commercialEnquiryAllowed(workId: number): Promise<boolean> {
  const work = await Work.findByPk(workId, { attributes: ['id', 'propertyRelease'] });
  return work ? commercialAllowed(work.propertyRelease) : false;
}

/** A buyer asks for a quote. Refused for a work not on sale, commercial use without a release, and too many open enquiries. */
export async function createEnquiry(user: SessionUser, input: EnquiryInput, now = new Date()): Promise<QuoteView> {
  const quote = await db().transaction(async (transaction) => {
    const work = await Work.findOne({ where: { id: input.workId, status: 'published' }, transaction });
    if (!work) throw new QuoteError(404, 'work_not_found', 'That work is not on sale.', { workId: 'No such work on sale.' });
    if (input.use === 'commercial' && !commercialAllowed(work.propertyRelease)) {
      throw new QuoteError(422, 'release_required', RELEASE_MESSAGE, { use: 'Commercial use is not offered for this work.' });
    }
    const open = await LicenceQuote.findAll({ where: { userId: user.id, status: 'requested' }, attributes: ['id', 'workId'], transaction });
    if (open.some((q) => q.workId === work.id)) {
      throw new QuoteError(409, 'already_asked', 'You already have an enquiry waiting for this work. The studio will answer it by e-mail.');
    }
    if (open.length >= MAX_OPEN_ENQUIRIES) {
      throw new QuoteError(429, 'too_many_enquiries', `You have ${open.length} enquiries waiting for an answer. Please wait for the studio to answer some of them first.`);
    }
    const lastDay = await LicenceQuote.count({ where: { userId: user.id, createdAt: { [Op.gt]: new Date(now.getTime() - 86_400_000) } }, transaction });
    if (lastDay >= MAX_ENQUIRIES_PER_DAY) {
      throw new QuoteError(429, 'too_many_enquiries', `You have sent ${lastDay} enquiries in the last 24 hours. Please try again tomorrow.`);
    }
    const request: QuoteRequest = {
      use: input.use, media: input.media, printRun: input.printRun, territory: input.territory,
      termMonths: input.termMonths, exclusivity: input.exclusivity, message: input.message,
    };
    const created = await LicenceQuote.create({
      id: newQuoteId(), workId: work.id, userId: user.id, email: user.email,
      licenseeName: input.licenseeName, licenseeOrganisation: input.licenseeOrganisation || null, request,
    }, { transaction });
    created.work = work;
    return created;
  });

  const shop = await shopName();
  const url = `${config().publicOrigin}/studio/quotes/${quote.id}`;
  const r = quote.request;
  const lines = [
    `${quote.licenseeName}${quote.licenseeOrganisation ? ` (${quote.licenseeOrganisation})` : ''}, ${quote.email}, asks for a custom licence for “${quote.work!.title}”.`,
    [
      `Use: ${USE_LABEL[r.use]}`,
      `Media: ${r.media}`,
      `Print run or audience: ${r.printRun == null ? 'not given' : r.printRun.toLocaleString('en-GB')}`,
      `Territory: ${r.territory}`,
      `Term: ${termText(r.termMonths)}`,
      `Exclusivity: ${EXCLUSIVITY_LABEL[r.exclusivity]}`,
    ].join('\n'),
    `Their words:\n${r.message}`,
  ];
  const recipients = await studioAddresses();
  await sendQuietly(recipients.map((to) => ({
    to,
    subject: `${shop}: licence enquiry for “${quote.work!.title}”`,
    text: `${lines.join('\n\n')}\n\nAnswer it in the Studio:\n${url}\n`,
    html: mailHtml(lines, { label: 'Answer it in the Studio', url }),
  })));
  return view(quote);
}

// -------------------------------------------------------------------------------------- the Studio

/** Every quote, those waiting for an answer first (oldest first), then live offers, then the rest, newest first. */
export async function listQuotesForStudio(now = new Date()): Promise<QuoteView[]> {
  const quotes = await LicenceQuote.findAll({ include: [{ model: Work, as: 'work' }], order: [['createdAt', 'DESC']], limit: 500 });
  const views = await Promise.all(quotes.map((q) => view(q, now)));
  const rank = (v: QuoteView) => (v.state === 'requested' ? 0 : v.state === 'quoted' ? 1 : 2);
  return views.sort((a, b) => rank(a) - rank(b) || (rank(a) === 0 ? a.createdAt.localeCompare(b.createdAt) : b.createdAt.localeCompare(a.createdAt)));
}

export async function countWaitingQuotes(): Promise<number> {
  return LicenceQuote.count({ where: { status: 'requested' } });
}

export async function quoteForStudio(id: string): Promise<QuoteView | null> {
  if (!QUOTE_ID_PATTERN.test(id)) return null;
  const quote = await LicenceQuote.findByPk(id, { include: [{ model: Work, as: 'work' }] });
  return quote ? view(quote) : null;
}

function alreadyDecided(quote: LicenceQuote): QuoteError {
  const state = quoteState(quote);
  const words = { quoted: 'has already been answered', expired: 'was answered and has expired', declined: 'was declined', paid: 'has been paid for', withdrawn: 'was withdrawn', requested: '' }[state];
  return new QuoteError(409, 'already_answered', `This enquiry ${words}; it cannot be answered again.`);
}

/** The Studio answers with terms, a price in the shop's currency and a validity; the buyer is mailed a link. */
export async function answerQuote(actor: AuditActor, id: string, answer: AnswerData, now = new Date()): Promise<QuoteView> {
  const shop = await getShop();
  const quote = await db().transaction(async (transaction) => {
    const quote = QUOTE_ID_PATTERN.test(id) ? await LicenceQuote.findByPk(id, { include: [{ model: Work, as: 'work' }], transaction }) : null;
    if (!quote) throw new QuoteError(404, 'not_found', 'No such enquiry.');
    if (quote.status !== 'requested') throw alreadyDecided(quote);
    if (!quote.work || quote.work.status !== 'published') throw new QuoteError(409, 'work_not_on_sale', 'The work is not on sale any more; decline the enquiry instead.');
    if (answer.use === 'commercial' && !commercialAllowed(quote.work.propertyRelease)) {
      throw new QuoteError(422, 'release_required', 'The work has no property release, so it cannot be licensed for commercial use. Change its release status first, or offer editorial terms.', { use: 'Needs a property release.' });
    }
    const terms: QuotedTerms = {
      tierName: customLicenceName(answer.exclusivity), use: answer.use, terms: answer.terms, media: answer.media,
      cap: answer.cap, capUnit: answer.capUnit, territory: answer.territory, termMonths: answer.termMonths, exclusivity: answer.exclusivity,
    };
    const before = { status: quote.status, price: quote.price, currency: quote.currency, expiresAt: null };
    await quote.update({
      status: 'quoted', terms, price: answer.priceMinor, currency: shop.currency, reply: answer.reply || null,
      answeredBy: actor.id, answeredAt: now, expiresAt: quoteExpiry(now, answer.validityDays),
    }, { transaction });
    await recordAudit(actor, {
      action: 'quote.answer', subjectType: 'quote', subjectId: quote.id, userId: quote.userId,
      before,
      after: { status: 'quoted', price: quote.price, currency: quote.currency, expiresAt: quote.expiresAt!.toISOString(), terms: termsSummary(terms) },
    }, transaction);
    return quote;
  });

  const url = `${config().publicOrigin}/account/quotes/${quote.id}`;
  const paragraphs = [
    `The studio has answered your enquiry for a licence to use “${quote.work!.title}”.`,
    `Terms: ${termsSummary(quote.terms!)}.`,
    `Price: ${formatMoney(quote.price!, quote.currency!)}, including VAT. The offer stands until ${formatDay(quote.expiresAt!)}.`,
    ...(quote.reply ? [`From the studio:\n${quote.reply}`] : []),
    'Open the quote to read the terms in full and buy the licence:',
  ];
  await sendQuietly([{
    to: quote.email,
    subject: `${await shopName()}: your licence quote for “${quote.work!.title}”`,
    text: `${paragraphs.join('\n\n')}\n${url}\n`,
    html: mailHtml(paragraphs, { label: 'See the quote', url }),
  }]);
  return view(quote);
}

/** The Studio declines an enquiry with a reason, which the buyer is told. */
export async function declineQuote(actor: AuditActor, id: string, reason: string): Promise<QuoteView> {
  const quote = await db().transaction(async (transaction) => {
    const quote = QUOTE_ID_PATTERN.test(id) ? await LicenceQuote.findByPk(id, { include: [{ model: Work, as: 'work' }], transaction }) : null;
    if (!quote) throw new QuoteError(404, 'not_found', 'No such enquiry.');
    if (quote.status !== 'requested') throw alreadyDecided(quote);
    await quote.update({ status: 'declined', reply: reason, answeredBy: actor.id, answeredAt: new Date() }, { transaction });
    await recordAudit(actor, {
      action: 'quote.decline', subjectType: 'quote', subjectId: quote.id, userId: quote.userId,
      before: { status: 'requested' }, after: { status: 'declined', reason },
    }, transaction);
    return quote;
  });
  const url = `${config().publicOrigin}/account/quotes/${quote.id}`;
  const title = quote.work?.title ?? 'the work';
  const paragraphs = [`The studio cannot offer a licence for your enquiry about “${title}”.`, `Their reason:\n${reason}`];
  await sendQuietly([{
    to: quote.email,
    subject: `${await shopName()}: your licence enquiry for “${title}”`,
    text: `${paragraphs.join('\n\n')}\n\n${url}\n`,
    html: mailHtml(paragraphs, { label: 'Your enquiry', url }),
  }]);
  return view(quote);
}

// -------------------------------------------------------------------------------------- the buyer

/** The buyer's own quote; another account's reads as not found (it must not even be seen to exist). */
export async function quoteForOwner(userId: string, id: string): Promise<QuoteView | null> {
  if (!QUOTE_ID_PATTERN.test(id)) return null;
  const quote = await LicenceQuote.findOne({ where: { id, userId }, include: [{ model: Work, as: 'work' }] });
  return quote ? view(quote) : null;
}

export async function quotesForUser(userId: string): Promise<QuoteView[]> {
  const quotes = await LicenceQuote.findAll({ where: { userId }, include: [{ model: Work, as: 'work' }], order: [['createdAt', 'DESC']], limit: 100 });
  return Promise.all(quotes.map((q) => view(q)));
}

// ------------------------------------------------------------------------------ checkout, payment

/** Why this account cannot buy this quote now; null when it can. Other accounts' quotes read as unknown. */
export function quoteRefusal(quote: LicenceQuote | null | undefined, userId: string | null, shopCurrency: string, now = new Date()): string | null {
  if (!userId) return 'Sign in with the account that asked for this quote to buy it.';
  if (!quote || quote.userId !== userId) return 'This quote is not available to your account.';
  const state = quoteState(quote, now);
  if (state === 'expired') return `This quote expired on ${formatDay(quote.expiresAt!)}. Ask the studio for a new one from the work’s page.`;
  if (state === 'requested') return 'The studio has not answered this enquiry yet.';
  if (state === 'declined') return 'The studio declined this enquiry.';
  if (state === 'paid') return 'This quote has already been paid for.';
  if (state === 'withdrawn') return 'The studio withdrew this quote.';
  if (quote.currency !== shopCurrency) return `This quote was made in ${quote.currency}; the shop now sells in ${shopCurrency}. Ask the studio for a new quote.`;
  return null;
}

/**
 * At payment: the quote must still be open for this order's buyer. A quote already paid by another
 * order (two checkouts of the same quote) is not sold twice. A quote that expired after checkout
 * started is honoured: the buyer began paying while the offer stood.
 */
export async function quoteClaimRefusal(quoteId: string, order: Order, transaction: Transaction): Promise<string | null> {
  const quote = await LicenceQuote.findByPk(quoteId, { transaction });
  if (!quote || quote.userId !== order.userId) return 'The quoted licence in this order is not this buyer’s.';
  if (quote.status === 'paid') return quote.orderId === order.id ? null : 'The quoted licence had already been paid for in another order; refunded in full.';
  if (quote.status !== 'quoted') return 'The quoted licence was no longer on offer when payment arrived; refunded in full.';
  return null;
}

/** Marks the quote paid by this order. Run after `quoteClaimRefusal` said yes, in the same transaction. */
export async function claimQuote(quoteId: string, order: Order, transaction: Transaction): Promise<LicenceQuote> {
  const [count] = await LicenceQuote.update({ status: 'paid', orderId: order.id }, { where: { id: quoteId, userId: order.userId!, status: 'quoted' }, transaction });
  const quote = (await LicenceQuote.findByPk(quoteId, { transaction }))!;
  if (count !== 1 && !(quote.status === 'paid' && quote.orderId === order.id)) throw new Error(`quote ${quoteId} could not be claimed for order ${order.number}`);
  return quote;
}

/** The quote for a checkout line, read again inside the checkout's transaction. */
export async function quoteForCheckout(quoteId: string, userId: string, shopCurrency: string, transaction: Transaction, now = new Date()): Promise<LicenceQuote | string> {
  const quote = await LicenceQuote.findByPk(quoteId, { transaction });
  return quoteRefusal(quote, userId, shopCurrency, now) ?? quote!;
}
