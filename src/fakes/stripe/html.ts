/** The fake's own pages: the hosted pay page and the event log. Plain HTML, no scripts. */
import { formatMinor } from './money';
import type { DeliveryRecord, EventObject, SessionRecord } from './state';

export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
}

const e = escapeHtml;

const STYLE = `
:root { color-scheme: light; }
* { box-sizing: border-box; }
body { margin: 0; background: #f6f2ea; color: #1c1a17;
  font: 16px/1.55 system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", sans-serif; }
main { max-width: 38rem; margin: 0 auto; padding: 2.5rem 1.25rem 4rem; }
main.wide { max-width: 64rem; }
h1, h2, .shop { font-family: 'DM Serif Display', Georgia, serif; font-weight: 400; letter-spacing: .01em; }
h1 { font-size: 2.1rem; line-height: 1.15; margin: .25rem 0 1.5rem; }
h2 { font-size: 1.35rem; margin: 2rem 0 .75rem; }
.shop { font-size: 1.15rem; }
.masthead { display: flex; justify-content: space-between; align-items: baseline; gap: 1rem;
  border-bottom: 1px solid rgba(28,26,23,.18); padding-bottom: .75rem; margin-bottom: 1.75rem; }
form { margin-top: 1rem; }
.tag { font-size: .75rem; text-transform: uppercase; letter-spacing: .12em; color: rgba(28,26,23,.7); }
.lines { list-style: none; margin: 0; padding: 0; }
.lines li { display: flex; justify-content: space-between; gap: 1rem; padding: .7rem 0;
  border-bottom: 1px solid rgba(28,26,23,.12); }
.lines .what small { display: block; color: rgba(28,26,23,.68); }
.lines .qty { display: block; color: rgba(28,26,23,.68); font-size: .9rem; }
.lines .amount, .total .amount { white-space: nowrap; font-variant-numeric: tabular-nums; }
.total { display: flex; justify-content: space-between; padding: .9rem 0 0; font-size: 1.15rem; font-weight: 600; }
fieldset { border: 0; padding: 0; margin: 0 0 .5rem; }
legend { font-family: 'DM Serif Display', Georgia, serif; font-size: 1.35rem; padding: 0; margin: 1.75rem 0 .5rem; }
label { display: block; font-size: .9rem; margin: .75rem 0 .25rem; }
input, select { width: 100%; font: inherit; color: inherit; background: #fffdf8;
  border: 1px solid rgba(28,26,23,.4); border-radius: 2px; padding: .6rem .7rem; }
input:focus, select:focus, button:focus, a:focus { outline: 2px solid #a83a1c; outline-offset: 2px; }
.pair { display: grid; grid-template-columns: 1fr 1fr; gap: 0 1rem; }
button.pay { display: block; width: 100%; margin-top: 1.75rem; padding: .85rem 1rem; border: 0; border-radius: 2px;
  background: #a83a1c; color: #fff; font: inherit; font-size: 1.05rem; font-weight: 600; cursor: pointer; }
button.pay:hover { background: #8f2f15; }
.notice { border-left: 3px solid #a83a1c; background: #fffdf8; padding: .75rem 1rem; margin: 1.25rem 0; }
.after { margin-top: 1.25rem; display: flex; justify-content: space-between; gap: 1rem; font-size: .95rem; }
a { color: #1c1a17; }
details { margin-top: 2rem; font-size: .9rem; color: rgba(28,26,23,.8); }
details code { font-size: .85rem; }
table { width: 100%; border-collapse: collapse; font-size: .9rem; }
th, td { text-align: left; vertical-align: top; padding: .5rem .5rem .5rem 0; border-bottom: 1px solid rgba(28,26,23,.12); }
td code { font-size: .8rem; word-break: break-all; }
.attempts { margin: 0; padding-left: 1rem; }
.ok { color: #2f5d34; } .bad { color: #a83a1c; }
`;

function page(title: string, body: string, wide = false): string {
  return `<!doctype html>
<html lang="en-GB">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="robots" content="noindex">
<title>${e(title)}</title>
<style>${STYLE}</style>
</head>
<body>
<main${wide ? ' class="wide"' : ''}>
${body}
</main>
</body>
</html>`;
}

export interface PayFormValues {
  email: string;
  cardholder_name: string;
  card_number: string;
  card_expiry: string;
  card_cvc: string;
  shipping_name: string;
  shipping_line1: string;
  shipping_line2: string;
  shipping_city: string;
  shipping_postal_code: string;
  shipping_country: string;
}

export const EMPTY_FORM: PayFormValues = {
  email: '',
  cardholder_name: '',
  card_number: '',
  card_expiry: '',
  card_cvc: '',
  shipping_name: '',
  shipping_line1: '',
  shipping_line2: '',
  shipping_city: '',
  shipping_postal_code: '',
  shipping_country: '',
};

let regionNames: Intl.DisplayNames | null = null;
function countryName(code: string): string {
  try {
    regionNames ??= new Intl.DisplayNames(['en-GB'], { type: 'region' });
    return regionNames.of(code) ?? code;
  } catch {
    return code;
  }
}

function masthead(shopName: string): string {
  return `<div class="masthead"><span class="shop">${e(shopName)}</span><span class="tag">Test payment · no money moves</span></div>`;
}

function field(
  name: keyof PayFormValues,
  label: string,
  value: string,
  attrs: string,
): string {
  return `<label for="${name}">${e(label)}</label><input id="${name}" name="${name}" value="${e(value)}" ${attrs}>`;
}

export function renderPayPage(args: {
  shopName: string;
  record: SessionRecord;
  values: PayFormValues;
  /** Shown above the form: why the last try did not go through. */
  problem: string | null;
}): string {
  const { record, values, problem, shopName } = args;
  const s = record.session;
  const currency = s.currency ?? 'usd';
  const lines = record.lineItems
    .map((item, i) => {
      const display = record.display[i];
      const quantity = item.quantity ?? 1;
      const unit = item.price.unit_amount ?? 0;
      return `<li><span class="what">${e(display?.name ?? item.description ?? '')}${
        display?.description ? `<small>${e(display.description)}</small>` : ''
      }<span class="qty">${quantity} × ${e(formatMinor(unit, currency))}</span></span><span class="amount">${e(
        formatMinor(item.amount_total, currency),
      )}</span></li>`;
    })
    .join('\n');
  const total = formatMinor(s.amount_total ?? 0, currency);
  const countries = s.shipping_address_collection?.allowed_countries ?? [];
  const shipping =
    countries.length > 0
      ? `<fieldset>
<legend>Ship to</legend>
${field('shipping_name', 'Full name', values.shipping_name, 'autocomplete="shipping name" required')}
${field('shipping_line1', 'Address line 1', values.shipping_line1, 'autocomplete="shipping address-line1" required')}
${field('shipping_line2', 'Address line 2 (optional)', values.shipping_line2, 'autocomplete="shipping address-line2"')}
<div class="pair">
<div>${field('shipping_city', 'Town or city', values.shipping_city, 'autocomplete="shipping address-level2" required')}</div>
<div>${field('shipping_postal_code', 'Postal code', values.shipping_postal_code, 'autocomplete="shipping postal-code" required')}</div>
</div>
<label for="shipping_country">Country</label>
<select id="shipping_country" name="shipping_country" autocomplete="shipping country" required>
${countries
  .map((c) => `<option value="${e(c)}"${c === values.shipping_country ? ' selected' : ''}>${e(countryName(c))}</option>`)
  .join('\n')}
</select>
</fieldset>`
      : '';
  const body = `${masthead(shopName)}
<h1>Pay for your order</h1>
<section aria-labelledby="summary-heading">
<h2 id="summary-heading">Your order</h2>
<ul class="lines">
${lines}
</ul>
<div class="total"><span>Total</span><span class="amount" data-total>${e(total)}</span></div>
</section>
${problem ? `<div class="notice" role="alert">${e(problem)}</div>` : ''}
<form method="post" action="/pay/${e(s.id)}" novalidate>
<fieldset>
<legend>Contact</legend>
${field('email', 'E-mail', values.email, 'type="email" autocomplete="email" required')}
</fieldset>
<fieldset>
<legend>Card</legend>
${field('cardholder_name', 'Name on card', values.cardholder_name, 'autocomplete="cc-name" required')}
${field('card_number', 'Card number', values.card_number, 'inputmode="numeric" autocomplete="cc-number" placeholder="1234 1234 1234 1234" required')}
<div class="pair">
<div>${field('card_expiry', 'Expiry (MM / YY)', values.card_expiry, 'inputmode="numeric" autocomplete="cc-exp" placeholder="MM / YY" required')}</div>
<div>${field('card_cvc', 'Security code', '', 'inputmode="numeric" autocomplete="cc-csc" placeholder="CVC" required')}</div>
</div>
</fieldset>
${shipping}
<button class="pay" type="submit">Pay ${e(total)}</button>
</form>
<div class="after">${s.cancel_url ? `<a href="${e(s.cancel_url)}">Cancel and return</a>` : '<span></span>'}</div>
<details>
<summary>Test cards</summary>
<p>Any future expiry and any three-digit code (four for Amex).</p>
<ul>
<li><code>4242 4242 4242 4242</code>, <code>5555 5555 5555 4444</code> — pay</li>
<li><code>4000 0000 0000 0002</code> — declined</li>
<li><code>4000 0000 0000 9995</code> — insufficient funds</li>
<li><code>4000 0000 0000 0069</code> — expired card</li>
<li><code>4000 0000 0000 0127</code> — wrong security code</li>
</ul>
</details>`;
  return page(`Pay ${total} · ${shopName}`, body);
}

export function renderMessagePage(args: { shopName: string; title: string; message: string; link: { href: string; label: string } | null }): string {
  const body = `${masthead(args.shopName)}
<h1>${e(args.title)}</h1>
<p>${e(args.message)}</p>
${args.link ? `<p><a href="${e(args.link.href)}">${e(args.link.label)}</a></p>` : ''}`;
  return page(`${args.title} · ${args.shopName}`, body);
}

function when(ms: number): string {
  return new Date(ms).toISOString().replace('T', ' ').replace(/\.\d+Z$/, 'Z');
}

function deliveryCell(delivery: DeliveryRecord | undefined): string {
  if (!delivery) return '<em>not sent (no endpoint)</em>';
  const attempts = delivery.attempts
    .map((a) => {
      const ok = a.status !== null && a.status >= 200 && a.status < 300;
      const what = a.status === null ? `unreachable (${a.error ?? 'error'})` : `HTTP ${a.status}`;
      return `<li class="${ok ? 'ok' : 'bad'}">${e(what)} at ${e(when(a.at))} (${a.durationMs} ms)</li>`;
    })
    .join('');
  const state =
    delivery.state === 'pending'
      ? `pending${delivery.nextAttemptAt ? `, next try ${e(when(delivery.nextAttemptAt))}` : ''}`
      : delivery.state === 'delivered'
        ? 'delivered'
        : 'gave up';
  return `${state}${attempts ? `<ol class="attempts">${attempts}</ol>` : ''}`;
}

export function renderEventsPage(args: {
  shopName: string;
  events: EventObject[];
  deliveries: DeliveryRecord[];
  webhookUrl: string | null;
}): string {
  const byEvent = new Map(args.deliveries.map((d) => [d.eventId, d]));
  const rows = [...args.events]
    .reverse()
    .slice(0, 300)
    .map(
      (ev) => `<tr>
<td>${e(when(ev.created * 1000))}</td>
<td>${e(ev.type)}</td>
<td><code>${e(ev.id)}</code><br><code>${e(ev.data.object.id)}</code></td>
<td>${deliveryCell(byEvent.get(ev.id))}</td>
</tr>`,
    )
    .join('\n');
  const body = `${masthead(args.shopName)}
<h1>Events</h1>
<p>Newest first. Webhooks go to <code>${e(args.webhookUrl ?? 'nowhere (no endpoint set)')}</code>. <a href="/">Refresh</a></p>
<table>
<thead><tr><th>Time (UTC)</th><th>Type</th><th>Event / object</th><th>Delivery</th></tr></thead>
<tbody>
${rows || '<tr><td colspan="4">No events yet.</td></tr>'}
</tbody>
</table>`;
  return page(`Events · ${args.shopName}`, body, true);
}
