/** Shared test setup: a temporary data folder with a migrated SQLite database, and small catalogue rows. */
import fs from 'node:fs';
import type { InferCreationAttributes } from 'sequelize';
import os from 'node:os';
import path from 'node:path';
import { resetConfigForTests } from '~/lib/server/config';
import { closeDb, db } from '~/lib/server/db';
import { migrator } from '../db/migrator';
import { Edition, LicenceTier, Paper, PrintOffer, PrintSize, Series, ShopSettings, Work, WorkLicencePrice } from '~/lib/server/models';
import { orientationOf } from '~/lib/server/models/Work';

export interface TestData { dir: string; cleanup: () => Promise<void> }

/** Points the app at a fresh folder, applies every migration, and returns a cleanup function. */
export async function useTempDatabase(): Promise<TestData> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillmark-test-'));
  process.env.STILLMARK_DATA_DIR = dir;
  delete process.env.DATABASE_PATH;
  delete process.env.UPLOADS_DIR;
  resetConfigForTests();
  await closeDb();
  await migrator(db()).up();
  return {
    dir,
    cleanup: async () => {
      await closeDb();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}

export const FAKE_DERIVATIVES = (width: number, height: number) => ({
  key: 'a'.repeat(24),
  formats: ['avif', 'webp', 'jpeg'] as ('avif' | 'webp' | 'jpeg')[],
  variants: [{ name: 'sm' as const, width: Math.min(480, width), height: Math.round((Math.min(480, width) * height) / width) }],
});

export async function insertSettings(overrides: Partial<InferCreationAttributes<ShopSettings>> = {}) {
  return ShopSettings.create({
    id: 1, shopName: 'Test shop', photographerName: 'Test Photographer', tagline: '', currency: 'GBP',
    targetPpi: 300, floorPpi: 240, wallFloorPpi: 150, viewingDistanceFactor: 1.5, watermarkText: 'test',
    limitedEditionPremiumBp: 2000, ...overrides,
  });
}

export async function insertWork(slug: string, width: number, height: number, extra: Partial<InferCreationAttributes<Work>> = {}) {
  return Work.create({
    slug, title: slug, caption: '', altText: `alt ${slug}`, keywords: [], width, height,
    orientation: orientationOf(width, height), capture: {}, status: 'published', publishedAt: new Date(),
    originalKey: `${slug}.jpg`, originalSha256: '0'.repeat(64), colourProfile: null,
    derivatives: FAKE_DERIVATIVES(width, height), placeholder: '', dominantColor: '#808080', seriesId: null, ...extra,
  });
}

export { Edition, LicenceTier, Paper, PrintOffer, PrintSize, Series, ShopSettings, Work, WorkLicencePrice };
