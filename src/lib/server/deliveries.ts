/** Licensed files, certificates and the public licence check: every lookup is scoped to its owner. */
import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import type { Readable } from 'node:stream';
import { QueryTypes } from 'sequelize';
import { config } from './config';
import { db } from './db';
import { DownloadGrant, EditionNumber, Licence, Order, OrderLine, Paper, PrintOffer, PrintSize, ShopSettings, Work } from './models';
import { checkDownloadToken, downloadToken } from './download-links';
import { licensedFileStream } from './delivery';
import { authenticityCertificatePdf, licenceCertificatePdf } from './certificates';
import { formatMoney } from '../money';

export class DeliveryError extends Error {
  constructor(readonly status: number, readonly code: string, message: string) {
    super(message);
  }
}

const notFound = () => new DeliveryError(404, 'not_found', 'No such file in your account.');

export function checkUrl(licenceId: string): string {
  return `${config().publicOrigin}/licences/${encodeURIComponent(licenceId)}`;
}

/** The licence's state today: revoked, expired (past its last day), or valid. */
export function licenceState(licence: Pick<Licence, 'status' | 'endsOn'>, today = new Date().toISOString().slice(0, 10)): 'valid' | 'expired' | 'revoked' {
  if (licence.status === 'revoked') return 'revoked';
  if (licence.endsOn && licence.endsOn < today) return 'expired';
  return 'valid';
}

/** A download link for each of the person's licences that still has a usable grant. */
export async function downloadLinkFor(licenceId: string, userId: string): Promise<{ url: string; expiresAt: Date; left: number } | null> {
  const licence = await Licence.findOne({ where: { id: licenceId, userId } });
  if (!licence || licenceState(licence) !== 'valid') return null;
  const grant = await DownloadGrant.findOne({ where: { licenceId }, order: [['id', 'DESC']] });
  if (!grant || grant.expiresAt <= new Date() || grant.downloads >= grant.maxDownloads) return null;
  return { url: `/api/account/downloads/${downloadToken(grant.id, grant.expiresAt)}`, expiresAt: grant.expiresAt, left: grant.maxDownloads - grant.downloads };
}

/** A fresh grant for a valid licence whose last link expired or was used up. */
export async function renewGrant(licenceId: string, userId: string): Promise<void> {
  const licence = await Licence.findOne({ where: { id: licenceId, userId } });
  if (!licence) throw notFound();
  if (licenceState(licence) !== 'valid') throw new DeliveryError(410, 'licence_not_valid', 'This licence has ended or was revoked; its file can no longer be downloaded.');
  const { downloadDays, downloadLimit } = config();
  await DownloadGrant.create({ licenceId, expiresAt: new Date(Date.now() + downloadDays * 86_400_000), maxDownloads: downloadLimit });
}

/** Checks the link, counts the download atomically, and streams the full-resolution file with the rights in it. */
export async function openDownload(token: string, userId: string): Promise<{ stream: Readable; fileName: string }> {
  const check = checkDownloadToken(token);
  if (!check.ok) throw check.reason === 'expired' ? new DeliveryError(410, 'link_expired', 'This download link has expired. Get a new one from your account.') : notFound();
  const grant = await DownloadGrant.findByPk(check.grantId);
  const licence = grant ? await Licence.findOne({ where: { id: grant.licenceId, userId } }) : null;
  if (!grant || !licence) throw notFound();
  if (licenceState(licence) !== 'valid') throw new DeliveryError(410, 'licence_not_valid', 'This licence has ended or was revoked; its file can no longer be downloaded.');
  const [, counted] = (await db().query(
    'UPDATE download_grants SET downloads = downloads + 1, updated_at = $2 WHERE id = $1 AND downloads < max_downloads AND expires_at > $2',
    { bind: [grant.id, new Date().toISOString().replace('T', ' ').replace('Z', ' +00:00')], type: QueryTypes.UPDATE },
  )) as [unknown, number];
  if (counted !== 1) throw new DeliveryError(410, 'link_used_up', 'This link has been used as often as it allows. Get a new one from your account.');
  const work = (await Work.findByPk(licence.workId))!;
  const settings = (await ShopSettings.findByPk(1))!;
  const year = (work.capture.takenAt ?? licence.startsOn).slice(0, 4);
  const made = licensedFileStream(path.join(config().originalsDir, work.originalKey), {
    creator: settings.photographerName,
    copyrightNotice: `© ${year} ${settings.photographerName}`,
    licenceId: licence.id,
    licenseeName: licence.licenseeOrganisation ? `${licence.licenseeName}, ${licence.licenseeOrganisation}` : licence.licenseeName,
    startsOn: licence.startsOn,
    endsOn: licence.endsOn,
    usageTerms: `${licence.terms.tierName}: ${licence.terms.terms}`,
    webStatement: checkUrl(licence.id),
    licensorName: settings.photographerName,
    licensorUrl: config().publicOrigin,
  });
  // sharp hands stream output over in one piece, so the file is made on disk first and then streamed
  // from there in small chunks; the temporary copy is removed once the stream closes.
  await fsp.mkdir(config().incomingDir, { recursive: true });
  const temp = path.join(config().incomingDir, `download-${crypto.randomUUID()}.jpg`);
  try {
    // libvips writes the file itself, so the encoded JPEG never sits in JavaScript memory.
    await made.toFile(temp);
    await fsp.chmod(temp, 0o600);
  } catch (error) {
    await fsp.rm(temp, { force: true });
    throw error;
  }
  const stream = fs.createReadStream(temp, { highWaterMark: 256 * 1024 });
  stream.once('close', () => void fsp.rm(temp, { force: true }));
  return { stream, fileName: `${work.slug}-${licence.id}.jpg` };
}

export async function licenceCertificate(licenceId: string, userId: string): Promise<{ pdf: Uint8Array; fileName: string }> {
  const licence = await Licence.findOne({ where: { id: licenceId, userId } });
  if (!licence) throw notFound();
  const work = (await Work.findByPk(licence.workId))!;
  const settings = (await ShopSettings.findByPk(1))!;
  const pdf = await licenceCertificatePdf({
    licenceId: licence.id,
    issuedAt: licence.createdAt,
    shopName: settings.shopName,
    photographerName: settings.photographerName,
    work: { title: work.title, year: Number((work.capture.takenAt ?? licence.startsOn).slice(0, 4)), pixelWidth: work.width, pixelHeight: work.height },
    licensee: { name: licence.licenseeName, organisation: licence.licenseeOrganisation ?? undefined },
    tier: { name: licence.terms.tierName, use: licence.terms.use, terms: licence.terms.terms, media: licence.terms.media, cap: licence.terms.cap, capUnit: licence.terms.capUnit ?? undefined, territory: licence.terms.territory },
    startsOn: licence.startsOn,
    endsOn: licence.endsOn,
    price: formatMoney(licence.price, licence.currency),
    checkUrl: checkUrl(licence.id),
  });
  return { pdf, fileName: `licence-${licence.id}.pdf` };
}

export async function authenticityCertificate(serial: string, userId: string): Promise<{ pdf: Uint8Array; fileName: string }> {
  const number = await EditionNumber.findOne({ where: { certificateSerial: serial, state: 'sold' } });
  const line = number ? await OrderLine.findByPk(number.orderLineId) : null;
  const order = line ? await Order.findOne({ where: { id: line.orderId, userId } }) : null;
  if (!number || !line || !order) throw notFound();
  const offer = (await PrintOffer.findByPk(line.printOfferId!, { include: [{ model: PrintSize, as: 'size' }, { model: Paper, as: 'paper' }] }))!;
  const work = (await Work.findByPk(line.workId))!;
  const settings = (await ShopSettings.findByPk(1))!;
  const edition = (line.snapshot as { edition: { total: number; artistProofs: number } }).edition;
  const pdf = await authenticityCertificatePdf({
    serial,
    issuedAt: order.paidAt ?? order.createdAt,
    shopName: settings.shopName,
    photographerName: settings.photographerName,
    work: { title: work.title, yearCaptured: Number((work.capture.takenAt ?? '2026').slice(0, 4)), yearPrinted: (order.paidAt ?? new Date()).getUTCFullYear() },
    edition: { number: number.number, total: edition.total, artistProofs: edition.artistProofs, sharedAcrossSizes: false },
    size: { label: offer.size!.label, unit: offer.size!.unit, width: offer.size!.width, height: offer.size!.height },
    paper: { name: offer.paper!.name, weightGsm: offer.paper!.weightGsm },
    process: 'Pigment inkjet print',
    printedBy: `${settings.shopName} print lab, supervised by the artist`,
  });
  return { pdf, fileName: `certificate-${serial}.pdf` };
}

/** What the public check page may say: the state, the work, and the licensee's organisation — nothing more. */
export async function publicLicenceCheck(licenceId: string): Promise<{ id: string; state: 'valid' | 'expired' | 'revoked'; workTitle: string; organisation: string | null; tierName: string; startsOn: string; endsOn: string | null } | null> {
  if (!/^SML-[A-Z0-9-]{10,60}$/.test(licenceId)) return null;
  const licence = await Licence.findByPk(licenceId);
  if (!licence) return null;
  const work = await Work.findByPk(licence.workId);
  return {
    id: licence.id,
    state: licenceState(licence),
    workTitle: work?.title ?? 'A withdrawn work',
    organisation: licence.licenseeOrganisation,
    tierName: licence.terms.tierName,
    startsOn: licence.startsOn,
    endsOn: licence.endsOn,
  };
}
