import { useEffect, useState } from 'react';
import { useStore } from '@nanostores/react';
import { QueryClient, QueryClientProvider, useQuery, keepPreviousData } from '@tanstack/react-query';
import { cart, removeLine, setQuantity } from '~/stores/cart';
import { formatMoney } from '~/lib/money';
import { lineKey, MAX_PRINT_QUANTITY, type CartLineInput, type CartQuote } from '~/lib/cart';

async function fetchQuote(lines: CartLineInput[]): Promise<CartQuote> {
  const response = await fetch('/api/cart/quote', {
    method: 'POST',
    headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify({ lines }),
  });
  const body = await response.json().catch(() => null);
  if (!response.ok) throw new Error(body?.error?.message ?? `The shop could not price the cart (${response.status}).`);
  return body as CartQuote;
}

/** The cart page: the browser keeps the choices, the server prices every line. */
export default function CartView() {
  const [client] = useState(() => new QueryClient({ defaultOptions: { queries: { retry: 1, refetchOnWindowFocus: false } } }));
  return (
    <QueryClientProvider client={client}>
      <CartLines />
    </QueryClientProvider>
  );
}

/** Back from the payment page without paying: close that payment so its held prints are released. */
function useCancelledPayment(): string | null {
  const [note, setNote] = useState<string | null>(null);
  useEffect(() => {
    const number = new URLSearchParams(window.location.search).get('cancelled');
    if (!number || !/^SM-\d{6}-[A-Z0-9]{6}$/.test(number)) return;
    void fetch(`/api/account/orders/${number}/cancel`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: '{}' });
    setNote('Payment cancelled: nothing was charged, and your cart is as you left it.');
    window.history.replaceState(null, '', '/cart');
  }, []);
  return note;
}

function CartLines() {
  const cancelled = useCancelledPayment();
  const lines = useStore(cart);
  const quote = useQuery({
    queryKey: ['cart-quote', lines],
    queryFn: () => fetchQuote(lines),
    enabled: lines.length > 0,
    placeholderData: keepPreviousData,
  });

  if (lines.length === 0) {
    return (
      <div className="py-12 text-center" data-testid="cart-empty">
        <p className="font-display text-2xl">Your cart is empty</p>
        <p className="mt-2 text-ink-soft">Licences and prints you choose on a work’s page wait here.</p>
        <a href="/" className="btn-quiet mt-6 no-underline">Back to the Gallery</a>
      </div>
    );
  }
  if (quote.isError) {
    return (
      <div role="alert" className="rounded-sm border border-ember p-4">
        <p>{quote.error.message}</p>
        <button type="button" className="btn-quiet mt-3" onClick={() => quote.refetch()}>Try again</button>
      </div>
    );
  }
  if (!quote.data) return <p className="text-ink-soft" aria-busy="true">Pricing your cart…</p>;

  const { data } = quote;
  const money = (amount: number) => formatMoney(amount, data.currency);
  return (
    <div className={quote.isFetching ? 'opacity-70 transition-opacity' : ''} aria-busy={quote.isFetching}>
      {cancelled && <p role="status" className="mb-4 rounded-sm border border-rule bg-paper-raised p-3 text-sm" data-testid="payment-cancelled">{cancelled}</p>}
      <ul className="divide-y divide-rule border-y border-rule" role="list">
        {data.lines.map((line) => {
          const input = lines.find((l) => lineKey(l) === line.key);
          return (
            <li key={line.key} className="flex gap-4 py-5" data-testid="cart-line">
              {line.ok ? (
                <>
                  <a href={`/works/${line.workSlug}`} className="shrink-0">
                    <img src={line.thumb.src} alt={line.thumb.alt} width={line.thumb.width} height={line.thumb.height} className="h-20 w-auto max-w-[7.5rem] bg-mat object-contain" loading="lazy" />
                  </a>
                  <div className="min-w-0 flex-1">
                    <a href={`/works/${line.workSlug}`} className="font-display text-lg no-underline hover:text-ember">{line.workTitle}</a>
                    <p className="text-sm">{line.description}</p>
                    <p className="text-xs text-ink-soft">{line.detail}</p>
                    <div className="mt-2 flex items-center gap-4 text-sm">
                      {line.kind === 'print' && input?.kind === 'print' && (
                        <label className="flex items-center gap-2">
                          <span className="text-ink-soft">Quantity</span>
                          <select className="field w-auto py-1" value={input.quantity} onChange={(e) => setQuantity(line.key, Number(e.target.value))}>
                            {Array.from({ length: MAX_PRINT_QUANTITY }, (_, i) => i + 1).map((n) => <option key={n} value={n}>{n}</option>)}
                          </select>
                        </label>
                      )}
                      {input?.kind === 'quote' && <a href={`/account/quotes/${input.quoteId}`} className="text-ink-soft underline hover:text-ember">The quote</a>}
                      <button type="button" className="text-ink-soft underline hover:text-ember" onClick={() => removeLine(line.key)}>Remove</button>
                    </div>
                  </div>
                  <div className="text-right">
                    <p className="price" data-testid="line-subtotal">{money(line.subtotal)}</p>
                    {line.quantity > 1 && <p className="text-xs text-ink-soft">{line.quantity} × {money(line.unitPrice)}</p>}
                  </div>
                </>
              ) : (
                <div className="flex flex-1 items-center justify-between gap-4" role="alert">
                  <p className="text-sm"><span className="font-medium">Cannot be bought:</span> {line.error}</p>
                  <button type="button" className="btn-quiet" onClick={() => removeLine(line.key)}>Remove</button>
                </div>
              )}
            </li>
          );
        })}
      </ul>
      <dl className="ml-auto mt-6 grid max-w-sm grid-cols-[1fr_auto] gap-y-2 text-sm">
        <dt className="text-ink-soft">Items</dt>
        <dd className="text-right tabular-nums">{data.itemCount}</dd>
        <dt className="text-ink-soft">Subtotal</dt>
        <dd className="text-right tabular-nums">{money(data.subtotal)}</dd>
        <dt className="font-display text-xl">Total</dt>
        <dd className="price text-right" data-testid="cart-total">{money(data.total)}</dd>
      </dl>
      <p className="mt-2 text-right text-xs text-ink-soft">Prices checked by the shop just now and include VAT. Shipping is added at checkout.</p>
      <div className="mt-6 text-right">
        {data.lines.every((l) => l.ok) ? (
          <a href="/checkout" className="btn-primary no-underline" data-testid="to-checkout">Checkout</a>
        ) : (
          <p className="text-sm text-ember">Remove the lines that cannot be bought to continue.</p>
        )}
      </div>
    </div>
  );
}
