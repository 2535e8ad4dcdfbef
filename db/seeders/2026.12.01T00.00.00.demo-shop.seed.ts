/** Seeds the demo shop. Every step finds rows by slug first, so a seed interrupted half way can run again. */
import fsp from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import type { QueryInterface } from 'sequelize';
import type { MigrationParams } from 'umzug';
import { config } from '../../src/lib/server/config';
import { makeDerivatives, sha256File, storeOriginal, inspectImage } from '../../src/lib/server/images';
import { Edition, LicenceTier, Paper, PrintOffer, PrintSize, Series, ShopSettings, Work, WorkLicencePrice } from '../../src/lib/server/models';
import { orientationOf } from '../../src/lib/server/models/Work';
import { gradePrint } from '../../src/lib/print-grade';
import { renderDemoOriginal } from './demo-art';
import { DEMO_EDITIONS, DEMO_PAPERS, DEMO_SERIES, DEMO_SETTINGS, DEMO_SIZES, DEMO_TIERS, DEMO_WORKS } from './demo-catalogue';

type Seed = (params: MigrationParams<QueryInterface>) => Promise<void>;

export const up: Seed = async ({ context: qi }) => {
  const sequelize = qi.sequelize;
  const { originalsDir, derivativesDir } = config();
  const log = (message: string) => process.stdout.write(`${message}\n`);

  await sequelize.transaction(async (transaction) => {
    const existing = await ShopSettings.findByPk(1, { transaction });
    if (!existing) await ShopSettings.create({ id: 1, ...DEMO_SETTINGS }, { transaction });
    for (const [position, s] of DEMO_SERIES.entries()) {
      await Series.findOrCreate({ where: { slug: s.slug }, defaults: { ...s, position }, transaction });
    }
    for (const [position, t] of DEMO_TIERS.entries()) {
      await LicenceTier.findOrCreate({ where: { slug: t.slug }, defaults: { ...t, position }, transaction });
    }
    for (const [position, s] of DEMO_SIZES.entries()) {
      await PrintSize.findOrCreate({ where: { slug: s.slug }, defaults: { ...s, position }, transaction });
    }
    for (const [position, p] of DEMO_PAPERS.entries()) {
      await Paper.findOrCreate({ where: { slug: p.slug }, defaults: { ...p, position }, transaction });
    }
  });

  const series = new Map((await Series.findAll()).map((s) => [s.slug, s]));
  const tiers = new Map((await LicenceTier.findAll()).map((t) => [t.slug, t]));
  const sizes = await PrintSize.findAll({ order: [['position', 'ASC']] });
  const papers = await Paper.findAll({ order: [['position', 'ASC']] });
  const settings = (await ShopSettings.findByPk(1))!;
  const scratch = await fsp.mkdtemp(path.join(os.tmpdir(), 'stillmark-seed-'));

  try {
    for (const [index, demo] of DEMO_WORKS.entries()) {
      if (await Work.findOne({ where: { slug: demo.slug } })) continue;
      const started = Date.now();
      const jpeg = await renderDemoOriginal(demo.slug, {
        width: demo.width,
        height: demo.height,
        capture: demo.capture,
        artist: settings.photographerName,
        copyright: `© ${demo.capture.takenAt.slice(0, 4)} ${settings.photographerName}`,
        description: demo.title,
      });
      const temp = path.join(scratch, `${demo.slug}.jpg`);
      await fsp.writeFile(temp, jpeg);
      const facts = await inspectImage(temp);
      const contentHash = await sha256File(temp);
      const originalKey = await storeOriginal(temp, originalsDir, 'jpg');
      const made = await makeDerivatives(path.join(originalsDir, originalKey), {
        derivativesDir,
        watermarkText: settings.watermarkText,
        contentHash,
      });

      await sequelize.transaction(async (transaction) => {
        const publishedAt = demo.status === 'draft' ? null : new Date(Date.UTC(2026, 9, 1 + index, 9));
        const work = await Work.create(
          {
            slug: demo.slug,
            title: demo.title,
            caption: demo.caption,
            altText: demo.altText,
            keywords: demo.keywords,
            notes: demo.notes ?? '',
            seriesId: series.get(demo.series)?.id ?? null,
            width: facts.width,
            height: facts.height,
            orientation: orientationOf(facts.width, facts.height),
            focalX: demo.focal?.x ?? 0.5,
            focalY: demo.focal?.y ?? 0.5,
            capture: facts.capture,
            status: demo.status ?? 'published',
            publishedAt,
            propertyRelease: demo.propertyRelease ?? 'PR-NAP',
            originalKey,
            originalSha256: contentHash,
            colourProfile: facts.colourProfile,
            derivatives: made.derivatives,
            placeholder: made.placeholder,
            dominantColor: made.dominantColor,
          },
          { transaction },
        );
        for (const slug of demo.withdrawn ?? []) {
          await WorkLicencePrice.create({ workId: work.id, licenceTierId: tiers.get(slug)!.id, mode: 'withdrawn', price: null }, { transaction });
        }
        for (const [slug, price] of Object.entries(demo.overrides ?? {})) {
          await WorkLicencePrice.create({ workId: work.id, licenceTierId: tiers.get(slug)!.id, mode: 'override', price }, { transaction });
        }
        for (const size of sizes) {
          // Offer a size only when the file holds it in at least one mode; Too small is never offered.
          const best = gradePrint({ image: facts, print: size, mode: 'fit', thresholds: settings });
          if (best.grade === 'too-small') continue;
          const limited = DEMO_EDITIONS[size.slug];
          const edition = await Edition.create(
            limited
              ? { workId: work.id, printSizeId: size.id, kind: 'limited', total: limited.total, artistProofs: limited.artistProofs }
              : { workId: work.id, printSizeId: size.id, kind: 'open', total: null },
            { transaction },
          );
          for (const paper of papers) {
            await PrintOffer.create({ workId: work.id, printSizeId: size.id, paperId: paper.id, editionId: edition.id, priceOverride: null }, { transaction });
          }
        }
      });
      log(`  demo work ${index + 1}/${DEMO_WORKS.length}: ${demo.title} (${Date.now() - started} ms)`);
    }
  } finally {
    await fsp.rm(scratch, { recursive: true, force: true });
  }
};

export const down: Seed = async ({ context: qi }) => {
  await qi.sequelize.transaction(async (transaction) => {
    await Work.destroy({ where: { slug: DEMO_WORKS.map((w) => w.slug) }, transaction });
  });
};
