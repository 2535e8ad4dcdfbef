/**
 * Runs the mail catcher on its own: `node --import tsx src/fakes/mail/cli.ts`.
 * MAIL_CATCHER_SMTP_PORT (2525), MAIL_CATCHER_HTTP_PORT (2526) and MAIL_CATCHER_STORE
 * (<STILLMARK_DATA_DIR or cwd>/db/mail-catcher.jsonl) set where it listens and what it keeps.
 */
import path from 'node:path';
import { startMailCatcher } from './catcher';

function port(name: string, fallback: number): number {
  const raw = process.env[name];
  if (raw === undefined || raw === '') return fallback;
  const value = Number(raw);
  if (!Number.isInteger(value) || value < 0 || value > 65535) {
    console.error(`mail catcher: ${name} must be a port number (0–65535), not "${raw}"`);
    process.exit(1);
  }
  return value;
}

const storeFile = path.resolve(
  process.env.MAIL_CATCHER_STORE || path.join(process.env.STILLMARK_DATA_DIR || process.cwd(), 'db', 'mail-catcher.jsonl'),
);

try {
  const catcher = await startMailCatcher({
    smtpPort: port('MAIL_CATCHER_SMTP_PORT', 2525),
    httpPort: port('MAIL_CATCHER_HTTP_PORT', 2526),
    storeFile,
  });
  console.log(
    `Mail catcher: SMTP on 127.0.0.1:${catcher.smtpPort}, messages at http://127.0.0.1:${catcher.httpPort}/messages, kept in ${storeFile}`,
  );
  let closing = false;
  for (const signal of ['SIGINT', 'SIGTERM'] as const) {
    process.on(signal, () => {
      if (closing) return;
      closing = true;
      catcher.close().then(
        () => process.exit(0),
        (error: unknown) => {
          console.error('mail catcher: did not close cleanly', error);
          process.exit(1);
        },
      );
    });
  }
} catch (error) {
  console.error(`mail catcher: could not start: ${error instanceof Error ? error.message : String(error)}`);
  process.exit(1);
}
