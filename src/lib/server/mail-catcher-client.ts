/** Reads the local mail catcher's HTTP API (MAIL_CATCHER_URL) for Dispatch → Mail. */
import { z } from 'zod';
import { config } from './config';

const TIMEOUT_MS = 3_000;
const ID = /^[a-f0-9]{24}$/;

export const caughtMailSummary = z.object({
  id: z.string().regex(ID),
  receivedAt: z.iso.datetime(),
  from: z.string().nullable(),
  to: z.array(z.string()),
  subject: z.string(),
});
export type CaughtMailSummary = z.infer<typeof caughtMailSummary>;

export const caughtMail = caughtMailSummary.extend({
  envelope: z.object({ from: z.string().nullable(), to: z.array(z.string()) }),
  text: z.string().nullable(),
  html: z.string().nullable(),
  headers: z.array(z.tuple([z.string(), z.string()])),
  size: z.number().int().nonnegative(),
});
export type CaughtMail = z.infer<typeof caughtMail>;

const listAnswer = z.object({ messages: z.array(caughtMailSummary) });

export type MailCatcherProblem = 'not_configured' | 'unreachable' | 'bad_response';

/** Why the catcher could not be read; pages show `message` as it is. */
export class MailCatcherError extends Error {
  constructor(
    readonly problem: MailCatcherProblem,
    message: string,
    options?: { cause?: unknown },
  ) {
    super(message, options);
    this.name = 'MailCatcherError';
  }
}

async function get(path: string): Promise<Response> {
  const base = config().mailCatcherUrl;
  if (!base) {
    throw new MailCatcherError('not_configured', 'No mail catcher is configured: mail goes to a real SMTP relay and is not kept here.');
  }
  const url = `${base.replace(/\/+$/, '')}${path}`;
  try {
    return await fetch(url, { headers: { Accept: 'application/json' }, signal: AbortSignal.timeout(TIMEOUT_MS) });
  } catch (error) {
    const timedOut = error instanceof Error && error.name === 'TimeoutError';
    const what = timedOut ? `did not answer within ${TIMEOUT_MS / 1000} s` : 'could not be reached';
    throw new MailCatcherError('unreachable', `The mail catcher at ${base} ${what}. Is it running?`, { cause: error });
  }
}

async function parse<T>(response: Response, schema: z.ZodType<T>): Promise<T> {
  if (!response.ok) {
    throw new MailCatcherError('bad_response', `The mail catcher answered ${response.status} ${response.statusText}.`);
  }
  let body: unknown;
  try {
    body = await response.json();
  } catch (error) {
    throw new MailCatcherError('bad_response', 'The mail catcher answered with something that is not JSON.', { cause: error });
  }
  const parsed = schema.safeParse(body);
  if (!parsed.success) {
    throw new MailCatcherError('bad_response', 'The mail catcher answered in a shape this shop does not understand.', { cause: parsed.error });
  }
  return parsed.data;
}

/** Caught messages, newest first; `to` keeps those addressed to one recipient. Throws MailCatcherError. */
export async function listCaughtMail({ to }: { to?: string } = {}): Promise<CaughtMailSummary[]> {
  const query = to?.trim() ? `?${new URLSearchParams({ to: to.trim() })}` : '';
  return (await parse(await get(`/messages${query}`), listAnswer)).messages;
}

/** One caught message in full, or null when there is none with that id. Throws MailCatcherError. */
export async function getCaughtMail(id: string): Promise<CaughtMail | null> {
  if (!ID.test(id)) return null;
  const response = await get(`/messages/${id}`);
  if (response.status === 404) return null;
  return parse(response, caughtMail);
}
