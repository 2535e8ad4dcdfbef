/** The cart: line choices only (no prices), kept in localStorage and shared by every island and tab. */
import { computed } from 'nanostores';
import { persistentAtom } from '@nanostores/persistent';
// Not '~/lib/cart': its zod schemas would ship to every Gallery page. The server checks carts with them.
import { lineKey, MAX_CART_LINES, MAX_PRINT_QUANTITY, toCartLines, type CartLineInput } from '~/lib/cart-lines';

export const CART_STORAGE_KEY = 'stillmark:cart:v1';

/** A stored cart that no longer parses (old format, hand-edited) is dropped, never crashed on. */
export function decodeCart(encoded: string): CartLineInput[] {
  try {
    const lines = toCartLines(JSON.parse(encoded));
    if (lines) return lines;
  } catch {
    // not JSON: fall through to the reset
  }
  if (typeof localStorage !== 'undefined') localStorage.removeItem(CART_STORAGE_KEY);
  return [];
}

export const cart = persistentAtom<CartLineInput[]>(CART_STORAGE_KEY, [], {
  encode: JSON.stringify,
  decode: decodeCart,
});

export const cartCount = computed(cart, (lines) => lines.reduce((n, l) => n + (l.kind === 'print' ? l.quantity : 1), 0));

export function addLicence(workId: number, tierId: number): void {
  const line: CartLineInput = { kind: 'licence', workId, tierId };
  const lines = cart.get();
  if (lines.some((l) => lineKey(l) === lineKey(line)) || lines.length >= MAX_CART_LINES) return;
  cart.set([...lines, line]);
}

/** Puts a quoted licence in the cart; the server prices it, and only for the account it was quoted to. */
export function addQuote(quoteId: string): void {
  const line: CartLineInput = { kind: 'quote', quoteId };
  const lines = cart.get();
  if (lines.some((l) => lineKey(l) === lineKey(line)) || lines.length >= MAX_CART_LINES) return;
  cart.set([...lines, line]);
}

export function addPrint(offerId: number, mode: 'fill' | 'fit', quantity = 1): void {
  const line: CartLineInput = { kind: 'print', offerId, mode, quantity };
  const lines = cart.get();
  const existing = lines.find((l) => lineKey(l) === lineKey(line));
  if (existing && existing.kind === 'print') {
    setQuantity(lineKey(existing), existing.quantity + quantity);
  } else if (lines.length < MAX_CART_LINES) {
    cart.set([...lines, line]);
  }
}

export function setQuantity(key: string, quantity: number): void {
  const clamped = Math.max(1, Math.min(MAX_PRINT_QUANTITY, Math.round(quantity)));
  cart.set(cart.get().map((l) => (l.kind === 'print' && lineKey(l) === key ? { ...l, quantity: clamped } : l)));
}

export function removeLine(key: string): void {
  cart.set(cart.get().filter((l) => lineKey(l) !== key));
}

export function clearCart(): void {
  cart.set([]);
}
