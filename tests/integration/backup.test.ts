import { spawnSync } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes, type Sequelize } from 'sequelize';
import sqlite3 from 'sqlite3';
import { config } from '~/lib/server/config';
import { createSequelize, db } from '~/lib/server/db';
import { BackupError, createBackup, restoreBackup, verifyBackup, MANIFEST, type BackupManifest } from '~/lib/server/backup';
import { startCheckout } from '~/lib/server/checkout';
import { stopMailOutbox } from '~/lib/server/mail';
import { startStripeFake, type StripeFake } from '../../src/fakes/stripe/server';
import { useTempDatabase, type TestData } from '../_fixtures';
import { TEST_USERS } from '../faults/users';
import { cartFor, insertShop, pay, startWebhookReceiver, testJpeg, uploadWork, waitUntil, type Shop } from '../faults/shop';

const SECRET = 'whsec_backup_test_secret';
let data: TestData;
let fake: StripeFake;
let receiver: { url: string; close: () => void };
let shop: Shop;
let orderNumber: string;
const scratch: string[] = [];

function tempDir(label: string): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), `stillmark-${label}-`));
  scratch.push(dir);
  return dir;
}

function sha256(file: string): string {
  return crypto.createHash('sha256').update(fs.readFileSync(file)).digest('hex');
}

/** Every file under `dir` with its SHA-256, by relative path. */
function hashTree(dir: string, prefix = ''): Map<string, string> {
  const out = new Map<string, string>();
  if (!fs.existsSync(path.join(dir, prefix))) return out;
  for (const entry of fs.readdirSync(path.join(dir, prefix), { withFileTypes: true })) {
    const rel = prefix ? `${prefix}/${entry.name}` : entry.name;
    if (entry.isDirectory()) for (const [k, v] of hashTree(dir, rel)) out.set(k, v);
    else out.set(rel, sha256(path.join(dir, rel)));
  }
  return out;
}

beforeAll(async () => {
  data = await useTempDatabase();
  // No relay in this test: order mail waits in the outbox (and is backed up with everything else).
  process.env.SMTP_URL = 'smtp://127.0.0.1:9';
  receiver = await startWebhookReceiver();
  fake = await startStripeFake({ port: 0, stateFile: path.join(data.dir, 'stripe.json'), webhookUrl: receiver.url, webhookSecret: SECRET, retryDelaysMs: [50, 100, 200] });
  process.env.STRIPE_API_BASE = fake.url;
  process.env.STRIPE_WEBHOOK_SECRET = SECRET;
  process.env.STRIPE_SECRET_KEY = 'sk_test_backup';
  const { resetConfigForTests } = await import('~/lib/server/config');
  resetConfigForTests();

  shop = await insertShop();
  await uploadWork(await testJpeg(900, 1200, 'plain', 2), 'linen-and-pears.jpg');
  const started = await startCheckout(TEST_USERS.buyer, cartFor(shop), 'http://localhost:4321');
  orderNumber = started.orderNumber;
  expect((await pay(started.url, TEST_USERS.buyer.email)).status).toBe(303);
  await waitUntil('the order is paid', async () => (await db().query<{ status: string }>('SELECT status FROM orders WHERE number = $1', { bind: [orderNumber], type: QueryTypes.SELECT }))[0]?.status === 'paid');
  // A lab file, as the lab pack writes them.
  fs.mkdirSync(path.join(config().labDir, orderNumber), { recursive: true });
  fs.writeFileSync(path.join(config().labDir, orderNumber, 'job-sheet.pdf'), '%PDF-1.7 test job sheet\n');
  // Rows written in pairs, one pair per transaction: a consistent copy holds whole pairs only.
  await db().query('CREATE TABLE probe_a (n INTEGER PRIMARY KEY)');
  await db().query('CREATE TABLE probe_b (n INTEGER PRIMARY KEY)');
}, 60_000);

afterAll(async () => {
  await stopMailOutbox();
  receiver?.close();
  await fake?.close();
  await data?.cleanup();
  for (const dir of scratch) fs.rmSync(dir, { recursive: true, force: true });
});

function readOnly<T>(file: string, sql: string): Promise<T[]> {
  return new Promise((resolve, reject) => {
    const handle = new sqlite3.Database(file, sqlite3.OPEN_READONLY, (error) => {
      if (error) return reject(error);
      handle.all(sql, (queryError, result) => handle.close(() => (queryError ? reject(queryError) : resolve(result as T[]))));
    });
  });
}

async function rows<T extends object>(sequelize: Sequelize, sql: string): Promise<T[]> {
  return sequelize.query<T>(sql, { type: QueryTypes.SELECT });
}

describe('npm run backup / npm run restore', () => {
  let backupDir: string;
  let manifest: BackupManifest;
  let pairsBefore = 0;
  let pairsAfter = 0;

  it('copies the database consistently while the app is writing, with the files and a manifest', async () => {
    let n = 0;
    let stop = false;
    const writer = (async () => {
      while (!stop) {
        n++;
        const value = n;
        await db().transaction(async (transaction) => {
          await db().query('INSERT INTO probe_a (n) VALUES ($1)', { bind: [value], transaction });
          await new Promise((r) => setTimeout(r, 1)); // a gap between the two halves of the pair
          await db().query('INSERT INTO probe_b (n) VALUES ($1)', { bind: [value], transaction });
        });
      }
    })();
    await expect.poll(() => n, { timeout: 5000 }).toBeGreaterThan(20);
    pairsBefore = (await rows<{ c: number }>(db(), 'SELECT COUNT(*) AS c FROM probe_b'))[0]!.c;
    const made = await createBackup({ parentDir: tempDir('backups') });
    pairsAfter = n;
    // Still writing after the backup finished: it never blocked the writer.
    await expect.poll(() => n, { timeout: 5000 }).toBeGreaterThan(pairsAfter + 5);
    stop = true;
    await writer;
    backupDir = made.dir;
    manifest = made.manifest;

    expect(path.basename(backupDir)).toMatch(/^stillmark-\d{4}-\d\d-\d\dT\d\d-\d\d-\d\dZ$/);
    expect(fs.readdirSync(path.dirname(backupDir))).toEqual([path.basename(backupDir)]); // no temporary folder left
    const migrations = (await rows<{ name: string }>(db(), 'SELECT name FROM schema_migrations ORDER BY name')).map((r) => r.name);
    expect(manifest.database.migrations).toEqual(migrations);
    expect(manifest.database.migrations.some((m) => m.includes('mail-outbox'))).toBe(true);
    expect(manifest.database.counts).toEqual({ orders: 1, licences: 1, works: 2 });
    expect(manifest.warnings).toEqual([]);

    // Every listed file is there with the size and SHA-256 the manifest gives (FIPS 180-4 SHA-256 via node:crypto).
    for (const file of manifest.files) {
      const full = path.join(backupDir, file.path);
      expect(fs.statSync(full).size).toBe(file.bytes);
      expect(sha256(full)).toBe(file.sha256);
    }
    // Both works' originals and preview folders, and the lab file, are in it, byte for byte.
    for (const tree of ['uploads/originals', 'uploads/derivatives', 'lab'] as const) {
      const source = { 'uploads/originals': config().originalsDir, 'uploads/derivatives': config().derivativesDir, lab: config().labDir }[tree];
      const live = hashTree(source);
      expect(live.size).toBeGreaterThan(0);
      expect(hashTree(path.join(backupDir, tree))).toEqual(live);
    }

    // The copy is a snapshot: whole pairs only, as many as were committed at some moment during the backup.
    // (Read-only: opening it for writing would switch the copy to WAL and change its bytes.)
    const [counts] = await readOnly<{ a: number; b: number; joined: number }>(
      path.join(backupDir, 'db/stillmark.sqlite'),
      'SELECT (SELECT COUNT(*) FROM probe_a) AS a, (SELECT COUNT(*) FROM probe_b) AS b, (SELECT COUNT(*) FROM probe_a JOIN probe_b USING (n)) AS joined',
    );
    expect(counts!.a).toBe(counts!.b);
    expect(counts!.joined).toBe(counts!.a);
    expect(counts!.a).toBeGreaterThanOrEqual(pairsBefore);
    expect(counts!.a).toBeLessThanOrEqual(pairsAfter);
  });

  it('restores into a fresh folder: every order, licence, edition number and file', async () => {
    const into = path.join(tempDir('restore'), 'data');
    const result = await restoreBackup(backupDir, { into });
    expect(result.previous).toBeNull();
    expect(fs.readdirSync(into).sort()).toEqual(['db', 'lab', 'uploads']); // no temporary folder left

    const restored = createSequelize(path.join(into, 'db/stillmark.sqlite'));
    try {
      const queries = {
        orders: 'SELECT number, status, total, email, stripe_session_id FROM orders ORDER BY number',
        lines: 'SELECT id, order_id, kind, subtotal FROM order_lines ORDER BY id',
        licences: 'SELECT id, order_line_id, status, licensee_name FROM licences ORDER BY id',
        numbers: 'SELECT edition_id, number, state, order_line_id FROM edition_numbers ORDER BY edition_id, number',
        works: 'SELECT id, slug, original_key, original_sha256 FROM works ORDER BY id',
        grants: 'SELECT licence_id, max_downloads FROM download_grants ORDER BY licence_id',
        outbox: 'SELECT message_id, recipient, subject FROM mail_outbox ORDER BY id',
      };
      for (const [name, sql] of Object.entries(queries)) {
        const live = await rows(db(), sql);
        expect(await rows(restored, sql), name).toEqual(live);
      }
      const [paid] = await rows<{ status: string }>(restored, `SELECT status FROM orders WHERE number = '${orderNumber}'`);
      expect(paid?.status).toBe('paid');
      expect(await rows(restored, "SELECT number, state FROM edition_numbers")).toEqual([{ number: 1, state: 'sold' }]);
      expect(await rows(restored, 'SELECT COUNT(*) AS c FROM licences')).toEqual([{ c: 1 }]);
      // The restored original is the uploaded file: its hash is the one the work row recorded at upload.
      for (const work of await rows<{ original_key: string; original_sha256: string }>(restored, 'SELECT original_key, original_sha256 FROM works')) {
        expect(sha256(path.join(into, 'uploads/originals', work.original_key))).toBe(work.original_sha256);
      }
    } finally {
      await restored.close();
    }
    for (const [tree, source] of [['uploads/originals', config().originalsDir], ['uploads/derivatives', config().derivativesDir], ['lab', config().labDir]] as const) {
      expect(hashTree(path.join(into, tree))).toEqual(hashTree(source));
    }
  });

  it('refuses a folder that already holds data unless --force, and then moves the old data aside', async () => {
    const into = path.join(tempDir('restore'), 'data');
    await restoreBackup(backupDir, { into });
    fs.writeFileSync(path.join(into, 'db/stillmark.sqlite-wal'), 'stale'); // must never meet the restored database
    await expect(restoreBackup(backupDir, { into })).rejects.toThrow(/already holds shop data .*--force/);
    const again = await restoreBackup(backupDir, { into, force: true });
    expect(again.previous).toMatch(/\.replaced-/);
    expect(fs.existsSync(path.join(into, 'db/stillmark.sqlite-wal'))).toBe(false);
    expect(fs.readFileSync(path.join(again.previous!, 'db/stillmark.sqlite-wal'), 'utf8')).toBe('stale');
    expect(sha256(path.join(into, 'db/stillmark.sqlite'))).toBe(manifest.files.find((f) => f.path === 'db/stillmark.sqlite')!.sha256);
  });

  it('refuses a corrupted backup with a clear message, and restores nothing', async () => {
    // A copy of the backup with one byte of one original changed.
    const damaged = path.join(tempDir('damaged'), 'backup');
    fs.cpSync(backupDir, damaged, { recursive: true });
    const original = manifest.files.find((f) => f.path.startsWith('uploads/originals/'))!;
    const file = path.join(damaged, original.path);
    const bytes = fs.readFileSync(file);
    bytes[Math.floor(bytes.length / 2)] ^= 0x01;
    fs.writeFileSync(file, bytes);

    const into = path.join(tempDir('restore'), 'data');
    await expect(verifyBackup(damaged)).rejects.toThrow(BackupError);
    await expect(restoreBackup(damaged, { into })).rejects.toThrow(
      new RegExp(`The backup is damaged: ${original.path.replace(/\./g, '\\.')} does not match its SHA-256 in manifest\\.json .*Nothing was restored\\.`),
    );
    expect(fs.existsSync(into)).toBe(false);

    // The command says the same and fails.
    const cli = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/restore.ts', damaged, '--into', into], { encoding: 'utf8', env: { ...process.env } });
    expect(cli.status).toBe(1);
    expect(cli.stderr).toMatch(/restore refused: The backup is damaged: uploads\/originals\/.* does not match its SHA-256/);
    expect(fs.existsSync(into)).toBe(false);

    // A manifest naming a path outside the backup is refused before anything is read.
    const forged = path.join(tempDir('forged'), 'backup');
    fs.cpSync(backupDir, forged, { recursive: true });
    const m = JSON.parse(fs.readFileSync(path.join(forged, MANIFEST), 'utf8')) as BackupManifest;
    m.files.push({ path: '../../etc/passwd', bytes: 1, sha256: '0'.repeat(64) });
    fs.writeFileSync(path.join(forged, MANIFEST), JSON.stringify(m));
    await expect(verifyBackup(forged)).rejects.toThrow(/a path a backup cannot hold/);
  });

  it('runs as npm run backup, into the folder given', async () => {
    const parent = tempDir('cli-backups');
    const cli = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/backup.ts', parent], { encoding: 'utf8', env: { ...process.env } });
    expect(cli.status, cli.stderr).toBe(0);
    const [made] = fs.readdirSync(parent);
    expect(cli.stdout).toContain(path.join(parent, made!));
    expect((await verifyBackup(path.join(parent, made!))).database.counts).toEqual({ orders: 1, licences: 1, works: 2 });
  });
});
