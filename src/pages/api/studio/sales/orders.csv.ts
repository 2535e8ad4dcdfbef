import type { APIRoute } from 'astro';
import { requireArea } from '~/lib/server/guard';
import { invalidInput } from '~/lib/server/studio';
import { exportFileName, ordersCsv } from '~/lib/server/sales';
import { salesExportQuery } from '~/lib/sales';
import { attachment, CSV_CONTENT_TYPE } from '~/lib/csv';

/** Every order created in the optional UTC day range (?from=YYYY-MM-DD&to=YYYY-MM-DD), as CSV for the books. */
export const GET = (async ({ url, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const parsed = salesExportQuery.safeParse(Object.fromEntries(url.searchParams));
  if (!parsed.success) return invalidInput(parsed.error, 'invalid_query');
  return new Response(await ordersCsv(parsed.data), {
    headers: {
      'Content-Type': CSV_CONTENT_TYPE,
      'Content-Disposition': attachment(exportFileName('orders', parsed.data)),
      'Cache-Control': 'private, no-store',
    },
  });
}) satisfies APIRoute;
