import { cartCount } from '~/stores/cart';
import { useStoreAfterHydration } from './useAfterHydration';

/** The header's link to the cart, with the number of items kept in this browser. */
export default function CartBadge() {
  const count = useStoreAfterHydration(cartCount, 0);
  return (
    <a href="/cart" className="inline-flex items-center gap-2 no-underline hover:text-ember" data-testid="cart-badge">
      <span>Cart</span>
      <span
        className={`inline-flex h-5 min-w-5 items-center justify-center rounded-full px-1.5 text-xs tabular-nums ${count ? 'bg-ember text-paper-raised' : 'bg-mat text-ink-soft'}`}
        aria-label={`${count} ${count === 1 ? 'item' : 'items'} in the cart`}
      >
        {count}
      </span>
    </a>
  );
}
