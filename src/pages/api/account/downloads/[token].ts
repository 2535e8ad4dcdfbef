import { Readable } from 'node:stream';
import type { APIRoute } from 'astro';
import { requireArea } from '~/lib/server/guard';
import { jsonError } from '~/lib/server/http';
import { DeliveryError, openDownload } from '~/lib/server/deliveries';

/** The licensed file, full resolution with its rights written in, streamed; the link is signed, expiring and counted. */
export const GET = (async ({ params, locals }) => {
  const user = requireArea(locals, 'account');
  if (user instanceof Response) return user;
  try {
    const { stream, fileName } = await openDownload(params.token ?? '', user.id);
    // A buyer who cancels mid-download closes the stream early; that is not a server fault.
    stream.on('error', (error: NodeJS.ErrnoException) => {
      if (error.name !== 'AbortError' && error.code !== 'ERR_STREAM_PREMATURE_CLOSE') console.error('download failed', error);
    });
    return new Response(Readable.toWeb(stream) as ReadableStream<Uint8Array>, {
      headers: {
        'Content-Type': 'image/jpeg',
        'Content-Disposition': `attachment; filename="${fileName.replace(/[^\w.-]/g, '_')}"`,
        'Cache-Control': 'private, no-store',
        'X-Content-Type-Options': 'nosniff',
      },
    });
  } catch (error) {
    if (error instanceof DeliveryError) return jsonError(error.status, error.code, error.message);
    throw error;
  }
}) satisfies APIRoute;
