import type { APIRoute } from 'astro';
import { requireArea } from '~/lib/server/guard';
import { invalidInput } from '~/lib/server/studio';
import { exportFileName, licencesCsv } from '~/lib/server/sales';
import { salesExportQuery } from '~/lib/sales';
import { attachment, CSV_CONTENT_TYPE } from '~/lib/csv';

/** Every licence issued in the optional UTC day range, active and revoked: the rights register as CSV. */
export const GET = (async ({ url, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const parsed = salesExportQuery.safeParse(Object.fromEntries(url.searchParams));
  if (!parsed.success) return invalidInput(parsed.error, 'invalid_query');
  return new Response(await licencesCsv(parsed.data), {
    headers: {
      'Content-Type': CSV_CONTENT_TYPE,
      'Content-Disposition': attachment(exportFileName('licences', parsed.data)),
      'Cache-Control': 'private, no-store',
    },
  });
}) satisfies APIRoute;
