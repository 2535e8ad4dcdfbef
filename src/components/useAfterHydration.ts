import { useEffect, useState } from 'react';
import { useStore } from '@nanostores/react';
import type { ReadableAtom } from 'nanostores';

/**
 * A store's value once the island has hydrated, and `serverValue` before that. The cart lives in
 * localStorage, which the server cannot see; reading it during hydration would make the first client
 * render differ from the server's HTML (React error #418).
 */
export function useStoreAfterHydration<T>(store: ReadableAtom<T>, serverValue: T): T {
  const value = useStore(store);
  const [hydrated, setHydrated] = useState(false);
  useEffect(() => setHydrated(true), []);
  return hydrated ? value : serverValue;
}

/** False in the server's HTML and until the island has hydrated; a control disabled until then never swallows a click. */
export function useHydrated(): boolean {
  const [hydrated, setHydrated] = useState(false);
  useEffect(() => setHydrated(true), []);
  return hydrated;
}
