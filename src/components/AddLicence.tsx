import { addLicence, cart } from '~/stores/cart';
import { useHydrated, useStoreAfterHydration } from './useAfterHydration';

type Props = { workId: number; tierId: number; tierName: string };

/** Puts one licence tier for one work in the cart; a licence is bought once per cart. */
export default function AddLicence({ workId, tierId, tierName }: Props) {
  const lines = useStoreAfterHydration(cart, []);
  // Until the island hydrates the button is the server's copy: a click there would be lost.
  const hydrated = useHydrated();
  const inCart = lines.some((l) => l.kind === 'licence' && l.workId === workId && l.tierId === tierId);
  return inCart ? (
    <a href="/cart" className="btn-quiet no-underline" data-testid={`licence-in-cart-${tierId}`}>In the cart · view</a>
  ) : (
    <button type="button" className="btn-primary" disabled={!hydrated} data-ready={hydrated ? 'true' : undefined} onClick={() => addLicence(workId, tierId)} aria-label={`Add the ${tierName} licence to the cart`} data-testid={`add-licence-${tierId}`}>
      Add licence
    </button>
  );
}
