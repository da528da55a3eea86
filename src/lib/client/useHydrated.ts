/**
 * Whether this island has hydrated. The server render and the hydration pass see false;
 * the render after hydration sees true. Islands that take input disable their controls
 * until then, so nothing typed or ticked into the server's HTML is lost when React takes
 * the page over (the DOM would show a choice the island's state never recorded).
 */
import { useSyncExternalStore } from 'react';

const never = () => () => {};

export function useHydrated(): boolean {
  return useSyncExternalStore(
    never,
    () => true,
    () => false,
  );
}
