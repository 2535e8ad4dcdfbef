/**
 * The catalogue version: database triggers raise it on every change to a catalogue table (whichever
 * connection makes it), other writes leave it alone, and what is kept per version (the price lists behind
 * a cart quote) is never served after the catalogue changed.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import sqlite3 from 'sqlite3';
import { config } from '~/lib/server/config';
import { db } from '~/lib/server/db';
import { catalogueVersion } from '~/lib/server/catalogue-version';
import { quoteCart } from '~/lib/server/quote';
import { CATALOGUE_TABLES } from '../../db/migrations/2026.12.02T09.30.00.catalogue-version';
import { LicenceTier, ShopSettings, Work, insertSettings, insertWork, useTempDatabase, type TestData } from '../_fixtures';

let data: TestData;

beforeAll(async () => {
  data = await useTempDatabase();
  await insertSettings();
});
afterAll(async () => data.cleanup());

async function version(): Promise<number> {
  const v = await catalogueVersion();
  expect(typeof v).toBe('number');
  return v!;
}

describe('catalogue version', () => {
  it('has an insert, update and delete trigger on every catalogue table', async () => {
    const rows = await db().query<{ name: string }>("SELECT name FROM sqlite_master WHERE type = 'trigger' AND name LIKE 'catalogue_version_%'", { type: QueryTypes.SELECT });
    const names = new Set(rows.map((r) => r.name));
    for (const table of CATALOGUE_TABLES) for (const event of ['insert', 'update', 'delete']) expect(names).toContain(`catalogue_version_${table}_${event}`);
  });

  it('moves on an insert, an update and a delete of a work, and on a settings change', async () => {
    const v0 = await version();
    const work = await insertWork('versioned', 3000, 2000);
    const v1 = await version();
    expect(v1).toBeGreaterThan(v0);
    await work.update({ title: 'Versioned, renamed' });
    const v2 = await version();
    expect(v2).toBeGreaterThan(v1);
    await ShopSettings.update({ tagline: 'changed' }, { where: { id: 1 } });
    const v3 = await version();
    expect(v3).toBeGreaterThan(v2);
    await Work.destroy({ where: { id: work.id } });
    expect(await version()).toBeGreaterThan(v3);
  });

  it('moves when another connection (another process) changes the catalogue', async () => {
    const before = await version();
    const other = new sqlite3.Database(config().databasePath);
    await new Promise<void>((resolve, reject) => other.run("UPDATE shop_settings SET tagline = 'from elsewhere' WHERE id = 1", (e) => (e ? reject(e) : resolve())));
    await new Promise<void>((resolve) => other.close(() => resolve()));
    expect(await version()).toBeGreaterThan(before);
  });

  it('stays put when only orders and accounts change', async () => {
    const before = await version();
    await db().query("INSERT INTO webhook_events (id, type, created_at) VALUES ('evt_version_test', 'test', '2026-01-01T00:00:00Z')");
    expect(await version()).toBe(before);
  });

  it('gives every caller of a burst the same, current version', async () => {
    const current = await version();
    const burst = await Promise.all(Array.from({ length: 20 }, () => catalogueVersion()));
    expect(new Set(burst)).toEqual(new Set([current]));
  });
});

describe('price lists kept per catalogue version', () => {
  it('prices a licence at the new tier price as soon as the price changes', async () => {
    const work = await insertWork('priced', 6000, 4000);
    const tier = await LicenceTier.create({ slug: 'kept', name: 'Kept tier', use: 'editorial', summary: '', terms: 't', media: 'web', cap: null, capUnit: null, territory: 'Worldwide', termMonths: 12, defaultPrice: 12000 });
    const line = { kind: 'licence' as const, workId: work.id, tierId: tier.id };
    // DEVELOPERS.md (Data): a licence costs its tier's default price unless the work overrides it.
    expect((await quoteCart([line])).subtotal).toBe(12000);
    expect((await quoteCart([line])).subtotal).toBe(12000);
    await tier.update({ defaultPrice: 15000 });
    expect((await quoteCart([line])).subtotal).toBe(15000);
    await work.update({ status: 'draft' });
    expect((await quoteCart([line])).lines[0]).toMatchObject({ ok: false });
  });
});
