import { addQuote, cart } from '~/stores/cart';
import { useStoreAfterHydration } from './useAfterHydration';

type Props = { quoteId: string; workTitle: string };

/** Puts a quoted licence in the cart; the cart prices it again on the server, for this account only. */
export default function QuoteAddToCart({ quoteId, workTitle }: Props) {
  const lines = useStoreAfterHydration(cart, []);
  const inCart = lines.some((l) => l.kind === 'quote' && l.quoteId === quoteId);
  return inCart ? (
    <a href="/cart" className="btn-quiet no-underline" data-testid="quote-in-cart">In the cart · view</a>
  ) : (
    <button type="button" className="btn-primary" onClick={() => addQuote(quoteId)} aria-label={`Add the quoted licence for “${workTitle}” to the cart`} data-testid="add-quote">
      Add to cart
    </button>
  );
}
