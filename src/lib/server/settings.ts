/**
 * The Studio's settings: the shop's one settings row, and the licence tiers, papers and print sizes it sells.
 * Also runs the background re-make of every work's previews when the watermark text changes.
 */
import fsp from 'node:fs/promises';
import path from 'node:path';
import { Op, QueryTypes, UniqueConstraintError, col, fn, where, type Model, type ModelStatic, type Transaction } from 'sequelize';
import type { z } from 'zod';
import { config } from './config';
import { db } from './db';
import { recordAudit, type AuditActor } from './audit';
import { jsonError, zodFields } from './http';
import { makeDerivatives } from './images';
import { LicenceTier, Paper, PrintSize, ShopSettings, Work } from './models';
import { slugOf } from '../slug';
import {
  currencyChangeWarning,
  licenceTierInput,
  paperInput,
  printSizeInput,
  type DeleteOutcome,
  type LicenceTierData,
  type LicenceTierPatch,
  type LicenceTierView,
  type PaperData,
  type PaperPatch,
  type PaperView,
  type PrintSizeData,
  type PrintSizePatch,
  type PrintSizeView,
  type RebuildProgress,
  type SettingsSaved,
  type SettingsWarning,
  type ShopSettingsData,
  type ShopSettingsView,
  type StudioSettings,
} from '../settings-schemas';

// ------------------------------------------------------------------------------------------- errors

/** A refusal the Studio API answers with its own status (404 missing, 409 conflict, 400 after merging). */
export class SettingsError extends Error {
  constructor(
    readonly status: 400 | 404 | 409 | 422,
    readonly code: string,
    message: string,
    readonly fields?: Record<string, string>,
  ) {
    super(message);
    this.name = 'SettingsError';
  }
}

/** The JSON answer for an error thrown by this module; anything unexpected is logged and answered 500. */
export function settingsErrorResponse(error: unknown): Response {
  if (error instanceof SettingsError) return jsonError(error.status, error.code, error.message, error.fields);
  console.error('studio settings:', error);
  return jsonError(500, 'server_error', 'Something went wrong on the server; nothing was changed.');
}

/** 400 for a body that fails its schema, naming each bad field. */
export function invalidInput(error: z.ZodError, code: string): Response {
  const fields = zodFields(error);
  const [first] = Object.entries(fields);
  return jsonError(400, code, first ? `Check ${first[0]}: ${first[1]}` : 'The request is not valid.', fields);
}

/** A route's `[id]` as a row id, or null (answered 404: no such row). */
export function parseId(value: string | undefined): number | null {
  if (!value || !/^[1-9][0-9]{0,9}$/.test(value)) return null;
  return Number(value);
}

function invalidAfterMerge(error: z.ZodError, code: string): SettingsError {
  const fields = zodFields(error);
  const [first] = Object.entries(fields);
  return new SettingsError(400, code, first ? `Check ${first[0]}: ${first[1]}` : 'The change is not valid.', fields);
}

// -------------------------------------------------------------------------------------------- shop

function settingsView(s: ShopSettings): ShopSettingsView {
  return {
    shopName: s.shopName,
    photographerName: s.photographerName,
    tagline: s.tagline,
    currency: s.currency,
    targetPpi: s.targetPpi,
    floorPpi: s.floorPpi,
    wallFloorPpi: s.wallFloorPpi,
    viewingDistanceFactor: s.viewingDistanceFactor,
    watermarkText: s.watermarkText,
    limitedEditionPremiumBp: s.limitedEditionPremiumBp,
    labPpi: s.labPpi,
    labFormat: s.labFormat,
  };
}

const notConfigured = () => new SettingsError(404, 'not_configured', 'The shop has no settings yet: run `npm run seed`.');

export async function getSettings(): Promise<ShopSettingsView> {
  db();
  const row = await ShopSettings.findByPk(1);
  if (!row) throw notConfigured();
  return settingsView(row);
}

/**
 * Saves the shop's settings. Grade thresholds need nothing more: grades are computed on every request.
 * A new currency is allowed but prices are not converted (warned); a new watermark text starts the
 * background re-make of every work's previews.
 */
export async function updateSettings(input: ShopSettingsData, actor?: AuditActor): Promise<SettingsSaved> {
  const sequelize = db();
  const { before, after } = await sequelize.transaction(async (transaction) => {
    const row = await ShopSettings.findByPk(1, { transaction });
    if (!row) throw notConfigured();
    const before = settingsView(row);
    await row.update(input, { transaction });
    const after = settingsView(row);
    const money = (v: typeof before) => ({ currency: v.currency, limitedEditionPremiumBp: v.limitedEditionPremiumBp });
    if (actor && JSON.stringify(money(before)) !== JSON.stringify(money(after))) {
      await recordAudit(actor, { action: 'settings.money', subjectType: 'settings', subjectId: 1, before: money(before), after: money(after) }, transaction);
    }
    return { before, after };
  });
  const warnings: SettingsWarning[] = [];
  if (before.currency !== after.currency) {
    warnings.push({ code: 'currency_not_converted', message: currencyChangeWarning(before.currency, after.currency) });
  }
  const rebuild = before.watermarkText !== after.watermarkText ? startPreviewRebuild(after.watermarkText) : null;
  return { settings: after, warnings, rebuild };
}

// ------------------------------------------------------------------------------- shared row helpers

/** A URL-safe slug from a name: "Editorial · Digital" → "editorial-digital", "8 × 10 in" → "8-x-10-in". */
export function slugify(name: string, fallback: string): string {
  return slugOf(name, fallback, 60);
}

type SluggedModel = ModelStatic<Model>;

async function uniqueSlug(model: SluggedModel, base: string, transaction: Transaction): Promise<string> {
  const rows = await model.findAll({
    attributes: ['slug'],
    where: { slug: { [Op.or]: [base, { [Op.like]: `${base}-%` }] } },
    transaction,
  });
  const taken = new Set(rows.map((r) => String(r.get('slug'))));
  if (!taken.has(base)) return base;
  for (let n = 2; ; n++) if (!taken.has(`${base}-${n}`)) return `${base}-${n}`;
}

async function nextPosition(model: SluggedModel, transaction: Transaction): Promise<number> {
  const max = (await model.max('position', { transaction })) as number | null;
  return (max ?? -1) + 1;
}

/** Refuses a second row with the same name (case-insensitive), so buyers never see two alike. */
async function assertNameFree(model: SluggedModel, column: 'name' | 'label', value: string, exceptId: number | null, transaction: Transaction, what: string): Promise<void> {
  const clash = await model.findOne({
    where: {
      [Op.and]: [where(fn('lower', col(column)), value.toLowerCase()), ...(exceptId == null ? [] : [{ id: { [Op.ne]: exceptId } }])],
    },
    transaction,
  });
  if (clash) throw new SettingsError(409, `${what}_name_taken`, `There is already a ${what.replace('_', ' ')} called “${value}”.`, { [column]: 'This name is taken.' });
}

const REFERENCE_WORDS: Record<string, [string, string]> = {
  work_licence_prices: ['work’s own price', 'works’ own prices'],
  editions: ['edition', 'editions'],
  print_offers: ['print offer', 'print offers'],
};

/** Rows in any table that refer to `table`.`id`, found from SQLite's foreign keys (so later tables count too). */
async function referencesTo(table: string, id: number, transaction: Transaction): Promise<{ table: string; count: number }[]> {
  const sequelize = db();
  const keys = await sequelize.query<{ tbl: string; col: string }>(
    `SELECT m.name AS tbl, f."from" AS col FROM sqlite_master m, pragma_foreign_key_list(m.name) f
     WHERE m.type = 'table' AND f."table" = :table`,
    { replacements: { table }, type: QueryTypes.SELECT, transaction },
  );
  const found: { table: string; count: number }[] = [];
  const quote = (name: string) => `"${name.replace(/"/g, '""')}"`;
  for (const key of keys) {
    const [row] = await sequelize.query<{ n: number }>(`SELECT COUNT(*) AS n FROM ${quote(key.tbl)} WHERE ${quote(key.col)} = :id`, {
      replacements: { id },
      type: QueryTypes.SELECT,
      transaction,
    });
    if (row && row.n > 0) found.push({ table: key.tbl, count: Number(row.n) });
  }
  return found;
}

function describeReferences(refs: { table: string; count: number }[]): string {
  const parts = refs.map(({ table, count }) => {
    const [one, many] = REFERENCE_WORDS[table] ?? [table.replace(/_/g, ' '), table.replace(/_/g, ' ')];
    return `${count} ${count === 1 ? one : many}`;
  });
  return parts.length > 1 ? `${parts.slice(0, -1).join(', ')} and ${parts.at(-1)}` : parts[0] ?? 'other records';
}

/** The few row methods a delete needs, common to tiers, papers and sizes. */
interface CatalogueRow {
  active: boolean;
  destroy(options: { transaction: Transaction }): Promise<void>;
  save(options: { transaction: Transaction }): Promise<unknown>;
}

/**
 * Deletes a row, or — when anything refers to it — sets it inactive instead, so editions, offers,
 * per-work prices and past orders keep what they point at.
 */
async function deleteOrDeactivate<R extends CatalogueRow, T>(options: {
  find: (transaction: Transaction) => Promise<R | null>;
  table: string;
  id: number;
  what: string;
  nameOf: (row: R) => string;
  hiddenFrom: string;
  view: (row: R) => T;
}): Promise<DeleteOutcome<T>> {
  const { find, table, id, what, nameOf, hiddenFrom, view } = options;
  return db().transaction(async (transaction) => {
    const row = await find(transaction);
    if (!row) throw new SettingsError(404, 'not_found', `No such ${what}.`);
    const name = nameOf(row);
    const refs = await referencesTo(table, id, transaction);
    if (refs.length === 0) {
      await row.destroy({ transaction });
      return { deleted: true, message: `“${name}” was deleted.` };
    }
    const wasActive = Boolean(row.active);
    row.active = false;
    await row.save({ transaction });
    return {
      deleted: false,
      deactivated: true,
      message: `“${name}” is used by ${describeReferences(refs)}, so it was ${wasActive ? 'set inactive' : 'left inactive'} instead of deleted: ${hiddenFrom}. You can make it active again at any time.`,
      item: view(row),
    };
  });
}

function mapUnique(error: unknown, what: string, column: string): never {
  if (error instanceof UniqueConstraintError) {
    throw new SettingsError(409, `${what}_conflict`, `Another ${what.replace('_', ' ')} was saved with the same name at the same moment; try again.`, { [column]: 'This name is taken.' });
  }
  throw error;
}

// ------------------------------------------------------------------------------------ licence tiers

function tierView(t: LicenceTier): LicenceTierView {
  return {
    id: t.id, slug: t.slug, position: t.position, name: t.name, use: t.use, summary: t.summary, terms: t.terms,
    media: t.media, cap: t.cap, capUnit: t.capUnit, territory: t.territory, termMonths: t.termMonths,
    defaultPrice: t.defaultPrice, active: Boolean(t.active),
  };
}

function tierValues(data: LicenceTierData) {
  // A cap unit means nothing without a cap.
  return { ...data, capUnit: data.cap == null ? null : data.capUnit || null };
}

export async function listTiers(): Promise<LicenceTierView[]> {
  db();
  const rows = await LicenceTier.findAll({ order: [['position', 'ASC'], ['id', 'ASC']] });
  return rows.map(tierView);
}

export async function createTier(data: LicenceTierData): Promise<LicenceTierView> {
  try {
    return await db().transaction(async (transaction) => {
      await assertNameFree(LicenceTier, 'name', data.name, null, transaction, 'licence_tier');
      const slug = await uniqueSlug(LicenceTier, slugify(data.name, 'licence'), transaction);
      const position = await nextPosition(LicenceTier, transaction);
      return tierView(await LicenceTier.create({ ...tierValues(data), slug, position }, { transaction }));
    });
  } catch (error) {
    return mapUnique(error, 'licence_tier', 'name');
  }
}

/** Applies a partial change; the merged tier must pass the whole schema. The slug stays, so links keep working. */
export async function updateTier(id: number, patch: LicenceTierPatch, actor?: AuditActor): Promise<LicenceTierView> {
  try {
    return await db().transaction(async (transaction) => {
      const row = await LicenceTier.findByPk(id, { transaction });
      if (!row) throw new SettingsError(404, 'not_found', 'No such licence tier.');
      const { id: _id, slug: _slug, position: _position, ...current } = tierView(row);
      const merged = licenceTierInput.safeParse({ ...current, ...patch });
      if (!merged.success) throw invalidAfterMerge(merged.error, 'invalid_tier');
      if (patch.name !== undefined) await assertNameFree(LicenceTier, 'name', merged.data.name, id, transaction, 'licence_tier');
      await row.update(tierValues(merged.data), { transaction });
      const { id: _i, slug: _s, position: _p, ...updated } = tierView(row);
      if (actor && JSON.stringify(current) !== JSON.stringify(updated)) {
        await recordAudit(actor, { action: 'tier.change', subjectType: 'licence_tier', subjectId: id, before: current, after: updated }, transaction);
      }
      return tierView(row);
    });
  } catch (error) {
    return mapUnique(error, 'licence_tier', 'name');
  }
}

export async function deleteTier(id: number): Promise<DeleteOutcome<LicenceTierView>> {
  return deleteOrDeactivate({
    find: (transaction) => LicenceTier.findByPk(id, { transaction }),
    table: 'licence_tiers', id, what: 'licence tier', nameOf: (t) => t.name,
    hiddenFrom: 'buyers can no longer choose it', view: tierView,
  });
}

// -------------------------------------------------------------------------------------------- papers

function paperView(p: Paper): PaperView {
  return {
    id: p.id, slug: p.slug, position: p.position, name: p.name, surface: p.surface, weightGsm: p.weightGsm,
    surchargeBp: p.surchargeBp, description: p.description, active: Boolean(p.active),
  };
}

export async function listPapers(): Promise<PaperView[]> {
  db();
  const rows = await Paper.findAll({ order: [['position', 'ASC'], ['id', 'ASC']] });
  return rows.map(paperView);
}

export async function createPaper(data: PaperData): Promise<PaperView> {
  try {
    return await db().transaction(async (transaction) => {
      await assertNameFree(Paper, 'name', data.name, null, transaction, 'paper');
      const slug = await uniqueSlug(Paper, slugify(data.name, 'paper'), transaction);
      const position = await nextPosition(Paper, transaction);
      return paperView(await Paper.create({ ...data, slug, position }, { transaction }));
    });
  } catch (error) {
    return mapUnique(error, 'paper', 'name');
  }
}

export async function updatePaper(id: number, patch: PaperPatch): Promise<PaperView> {
  try {
    return await db().transaction(async (transaction) => {
      const row = await Paper.findByPk(id, { transaction });
      if (!row) throw new SettingsError(404, 'not_found', 'No such paper.');
      const { id: _id, slug: _slug, position: _position, ...current } = paperView(row);
      const merged = paperInput.safeParse({ ...current, ...patch });
      if (!merged.success) throw invalidAfterMerge(merged.error, 'invalid_paper');
      if (patch.name !== undefined) await assertNameFree(Paper, 'name', merged.data.name, id, transaction, 'paper');
      await row.update(merged.data, { transaction });
      return paperView(row);
    });
  } catch (error) {
    return mapUnique(error, 'paper', 'name');
  }
}

export async function deletePaper(id: number): Promise<DeleteOutcome<PaperView>> {
  return deleteOrDeactivate({
    find: (transaction) => Paper.findByPk(id, { transaction }),
    table: 'papers', id, what: 'paper', nameOf: (p) => p.name,
    hiddenFrom: 'prints on it are no longer offered', view: paperView,
  });
}

// --------------------------------------------------------------------------------------- print sizes

function sizeView(s: PrintSize): PrintSizeView {
  return {
    id: s.id, slug: s.slug, position: s.position, label: s.label, family: s.family, unit: s.unit,
    width: s.width, height: s.height, basePrice: s.basePrice, active: Boolean(s.active),
  };
}

async function assertSizeFree(data: PrintSizeData, exceptId: number | null, transaction: Transaction): Promise<void> {
  const same = await PrintSize.findOne({
    where: { unit: data.unit, width: data.width, height: data.height, ...(exceptId == null ? {} : { id: { [Op.ne]: exceptId } }) },
    transaction,
  });
  if (same) {
    throw new SettingsError(409, 'print_size_taken', `${same.label} already has these measurements.`, { width: 'A size with these measurements exists.' });
  }
}

export async function listSizes(): Promise<PrintSizeView[]> {
  db();
  const rows = await PrintSize.findAll({ order: [['position', 'ASC'], ['id', 'ASC']] });
  return rows.map(sizeView);
}

export async function createSize(data: PrintSizeData): Promise<PrintSizeView> {
  try {
    return await db().transaction(async (transaction) => {
      await assertNameFree(PrintSize, 'label', data.label, null, transaction, 'print_size');
      await assertSizeFree(data, null, transaction);
      const slug = await uniqueSlug(PrintSize, slugify(data.label, 'size'), transaction);
      const position = await nextPosition(PrintSize, transaction);
      return sizeView(await PrintSize.create({ ...data, slug, position }, { transaction }));
    });
  } catch (error) {
    return mapUnique(error, 'print_size', 'label');
  }
}

/**
 * Applies a partial change. The measurements of a size that has editions or offers are fixed: a limited
 * edition was announced at that size, so a different size is a new size.
 */
export async function updateSize(id: number, patch: PrintSizePatch): Promise<PrintSizeView> {
  try {
    return await db().transaction(async (transaction) => {
      const row = await PrintSize.findByPk(id, { transaction });
      if (!row) throw new SettingsError(404, 'not_found', 'No such print size.');
      const { id: _id, slug: _slug, position: _position, ...current } = sizeView(row);
      const merged = printSizeInput.safeParse({ ...current, ...patch });
      if (!merged.success) throw invalidAfterMerge(merged.error, 'invalid_size');
      const data = merged.data;
      const measured = data.unit !== row.unit || data.width !== row.width || data.height !== row.height;
      if (measured) {
        const refs = await referencesTo('print_sizes', id, transaction);
        if (refs.length) {
          throw new SettingsError(
            409,
            'print_size_in_use',
            `${row.label} is used by ${describeReferences(refs)}, so its measurements cannot change. Add a new size instead, and set this one inactive.`,
            { width: 'Fixed while editions or offers use this size.' },
          );
        }
        await assertSizeFree(data, id, transaction);
      }
      if (patch.label !== undefined) await assertNameFree(PrintSize, 'label', data.label, id, transaction, 'print_size');
      await row.update(data, { transaction });
      return sizeView(row);
    });
  } catch (error) {
    return mapUnique(error, 'print_size', 'label');
  }
}

export async function deleteSize(id: number): Promise<DeleteOutcome<PrintSizeView>> {
  return deleteOrDeactivate({
    find: (transaction) => PrintSize.findByPk(id, { transaction }),
    table: 'print_sizes', id, what: 'print size', nameOf: (s) => s.label,
    hiddenFrom: 'prints at this size are no longer offered', view: sizeView,
  });
}

// ------------------------------------------------------------------------------- everything at once


/** What the settings page needs, as plain objects. */
export async function getStudioSettings(): Promise<StudioSettings> {
  const [settings, tiers, papers, sizes, workCount] = await Promise.all([getSettings(), listTiers(), listPapers(), listSizes(), Work.count()]);
  return { settings, tiers, papers, sizes, rebuild: rebuildProgress(), workCount };
}

// ------------------------------------------------------------------------------- preview re-making

interface RebuildJob {
  progress: RebuildProgress;
  /** Bumped by every start; a running pass that sees a newer generation stops and starts over. */
  generation: number;
  target: string | null;
  running: Promise<void> | null;
  /** Work id → the watermark text and folder its current previews were made with by this process. */
  madeWith: Map<number, { text: string; key: string }>;
}

const IDLE: RebuildProgress = { state: 'idle', watermarkText: null, done: 0, total: 0, currentTitle: null, errors: [], startedAt: null, finishedAt: null };

// Kept on globalThis so every copy of this module in one process (bundler chunks, dev reloads) shares one job.
const JOB_KEY = Symbol.for('stillmark.previewRebuild');

function job(): RebuildJob {
  const holder = globalThis as typeof globalThis & { [JOB_KEY]?: RebuildJob };
  holder[JOB_KEY] ??= { progress: { ...IDLE }, generation: 0, target: null, running: null, madeWith: new Map() };
  return holder[JOB_KEY];
}

/** A copy of the re-make's progress, safe to send as JSON. */
export function rebuildProgress(): RebuildProgress {
  const p = job().progress;
  return { ...p, errors: p.errors.map((e) => ({ ...e })) };
}

/**
 * Starts (or restarts with the newer text) the re-make of every work's previews, one work at a time,
 * in this process and outside the request that asked for it. Returns the progress at the start.
 */
export function startPreviewRebuild(watermarkText: string): RebuildProgress {
  const j = job();
  j.generation += 1;
  j.target = watermarkText;
  j.progress = { ...IDLE, state: 'running', watermarkText, errors: [], startedAt: new Date().toISOString() };
  // The runner clears `running` itself, in the same tick it finishes, so a start never falls between the two.
  j.running ??= runRebuild(j);
  return rebuildProgress();
}

/** Resolves when no re-make is running (for tests and orderly shutdown). */
export async function waitForPreviewRebuild(): Promise<RebuildProgress> {
  while (job().running) await job().running;
  return rebuildProgress();
}

function messageOf(error: unknown): string {
  return error instanceof Error ? error.message : String(error);
}

async function runRebuild(j: RebuildJob): Promise<void> {
  // Leave the request that started the job before doing any work.
  await new Promise((resolve) => setImmediate(resolve));
  for (;;) {
    const generation = j.generation;
    const text = j.target!;
    const progress = j.progress;
    try {
      const seen = new Set<number>();
      // Works uploaded while the pass runs are picked up by the next round of the same pass.
      for (;;) {
        const batch = (await Work.findAll({ attributes: ['id', 'title'], order: [['id', 'ASC']] })).filter((w) => !seen.has(w.id));
        if (batch.length === 0 || generation !== j.generation) break;
        progress.total += batch.length;
        for (const { id, title } of batch) {
          if (generation !== j.generation) break;
          seen.add(id);
          progress.currentTitle = title;
          try {
            await remakeOne(j, id, text);
          } catch (error) {
            console.error(`preview re-make failed for work ${id}:`, error);
            progress.errors.push({ workId: id, title, message: messageOf(error) });
          }
          progress.done += 1;
        }
      }
    } catch (error) {
      console.error('preview re-make stopped:', error);
      progress.errors.push({ workId: 0, title: '', message: messageOf(error) });
    }
    if (generation === j.generation) {
      progress.state = 'done';
      progress.currentTitle = null;
      progress.finishedAt = new Date().toISOString();
      j.running = null;
      return;
    }
  }
}

/** Makes one work's previews with `text`, points the row at them, then removes the folder it used before. */
async function remakeOne(j: RebuildJob, id: number, text: string): Promise<void> {
  const cfg = config();
  const work = await Work.findByPk(id);
  if (!work) return; // deleted meanwhile
  const oldKey = work.derivatives?.key ?? null;
  const previous = j.madeWith.get(id);
  if (previous && previous.text === text && previous.key === oldKey) return;
  const originalPath = path.join(cfg.originalsDir, path.basename(work.originalKey));
  const made = await makeDerivatives(originalPath, {
    derivativesDir: cfg.derivativesDir,
    watermarkText: text,
    contentHash: work.originalSha256,
    pixelLimit: cfg.uploadMaxPixels,
  });
  const newKey = made.derivatives.key;
  const [changed] = await db().transaction((transaction) =>
    Work.update(
      { derivatives: made.derivatives, placeholder: made.placeholder, dominantColor: made.dominantColor },
      // Only if the original is still the one the previews were made from (it may have been replaced meanwhile).
      { where: { id, originalSha256: work.originalSha256 }, transaction },
    ),
  );
  if (changed === 0) {
    await removeFolderIfUnused(newKey, work.originalSha256);
    return;
  }
  j.madeWith.set(id, { text, key: newKey });
  if (oldKey && oldKey !== newKey) await removeFolderIfUnused(oldKey, work.originalSha256);
}

/**
 * Removes a derivative folder once no work points at it. Folder names hash the original, so only works
 * with the same original can share one.
 */
async function removeFolderIfUnused(key: string, contentHash: string): Promise<void> {
  if (!/^[a-f0-9]{24}$/.test(key)) return;
  const twins = await Work.findAll({ attributes: ['derivatives'], where: { originalSha256: contentHash } });
  if (twins.some((w) => w.derivatives?.key === key)) return;
  await fsp.rm(path.join(config().derivativesDir, key), { recursive: true, force: true });
}
