import type { APIRoute } from 'astro';
import { auth, CLIENT_IP_HEADER } from '~/lib/server/auth';

/** Every better-auth endpoint. The client's address comes from the socket, never from a header it sent. */
export const ALL = (async ({ request, clientAddress }) => {
  const headers = new Headers(request.headers);
  headers.set(CLIENT_IP_HEADER, clientAddress);
  const forwarded = new Request(request, { headers, duplex: 'half' } as RequestInit);
  return auth().handler(forwarded);
}) satisfies APIRoute;
