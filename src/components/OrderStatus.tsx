import { useEffect, useState } from 'react';
import { QueryClient, QueryClientProvider, useQuery } from '@tanstack/react-query';
import { clearCart } from '~/stores/cart';
import { formatMoney } from '~/lib/money';
import type { OrderView } from '~/lib/order-types';

/** After the payment page: waits for the shop to hear from the payment service, then shows what was bought. */
export default function OrderStatus({ number }: { number: string }) {
  const [client] = useState(() => new QueryClient());
  return <QueryClientProvider client={client}><Status number={number} /></QueryClientProvider>;
}

function Status({ number }: { number: string }) {
  const query = useQuery({
    queryKey: ['order', number],
    queryFn: async () => {
      const response = await fetch(`/api/account/orders/${encodeURIComponent(number)}`);
      if (!response.ok) throw new Error(response.status === 404 ? 'No such order in your account.' : `The shop answered ${response.status}.`);
      return ((await response.json()) as { order: OrderView }).order;
    },
    refetchInterval: (q) => (q.state.data?.status === 'pending_payment' ? 700 : false),
  });
  const paid = query.data && query.data.status !== 'pending_payment';
  useEffect(() => {
    if (query.data?.status === 'paid') clearCart();
  }, [query.data?.status]);

  if (query.isError) return <p role="alert">{query.error.message}</p>;
  if (!query.data || !paid) {
    return <p aria-live="polite" data-testid="order-waiting">Waiting for the payment to be confirmed… This page updates by itself.</p>;
  }
  const order = query.data;
  const money = (n: number) => formatMoney(n, order.currency);
  return (
    <div aria-live="polite" data-testid="order-result">
      <p className="font-display text-3xl" data-testid="order-status">
        {order.status === 'paid' ? 'Paid — thank you' : order.status === 'refunded' ? 'Refunded' : order.status === 'expired' ? 'Expired' : order.status}
      </p>
      {order.note && <p className="mt-2 text-ink-soft">{order.note}</p>}
      <ul className="mt-6 divide-y divide-rule border-y border-rule" role="list">
        {order.lines.map((l, i) => (
          <li key={i} className="py-4">
            <p className="font-display text-lg">{l.workTitle}</p>
            <p className="text-sm">{l.description}{l.quantity > 1 ? ` × ${l.quantity}` : ''} · {money(l.subtotal)}</p>
            {l.editionNumbers.length > 0 && <p className="mt-1 text-sm" data-testid="edition-numbers">Edition number{l.editionNumbers.length > 1 ? 's' : ''}: {l.editionNumbers.map((n) => n.label).join(', ')}</p>}
            {l.licence && <p className="mt-1 text-sm" data-testid="licence-id">Licence {l.licence.id}, valid {l.licence.startsOn}{l.licence.endsOn ? ` to ${l.licence.endsOn}` : ', no end date'}</p>}
          </li>
        ))}
      </ul>
      <p className="mt-4 text-right">Total {money(order.total)} <span className="text-xs text-ink-soft">(VAT {money(order.taxIncluded)} included)</span></p>
      <p className="mt-6"><a href="/account" className="btn-quiet no-underline">Your account</a></p>
    </div>
  );
}
