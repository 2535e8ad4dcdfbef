/** The official Stripe SDK, pointed by configuration at the local fake or at Stripe itself. */
import Stripe from 'stripe';
import { config } from './config';

let cached: { key: string; client: Stripe } | undefined;

export function stripe(): Stripe {
  const { stripeSecretKey, stripeApiBase } = config();
  const key = `${stripeSecretKey}|${stripeApiBase}`;
  if (cached?.key !== key) {
    const base = new URL(stripeApiBase);
    cached = {
      key,
      client: new Stripe(stripeSecretKey, {
        host: base.hostname,
        port: base.port ? Number(base.port) : base.protocol === 'https:' ? 443 : 80,
        protocol: base.protocol === 'https:' ? 'https' : 'http',
        maxNetworkRetries: 2,
        telemetry: false,
      }),
    };
  }
  return cached.client;
}
