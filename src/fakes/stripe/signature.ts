/**
 * Webhook signatures (TRADE-FACTS §3.1): header `t=<unix seconds>,v1=<hex>` where the hex is
 * HMAC-SHA256 keyed with the endpoint secret over `${t}.${rawBody}`.
 */
import { createHmac } from 'node:crypto';

export function computeSignature(secret: string, timestamp: number, payload: string): string {
  return createHmac('sha256', secret).update(`${timestamp}.${payload}`, 'utf8').digest('hex');
}

export function signatureHeader(secret: string, payload: string, timestamp = Math.floor(Date.now() / 1000)): string {
  return `t=${timestamp},v1=${computeSignature(secret, timestamp, payload)}`;
}
