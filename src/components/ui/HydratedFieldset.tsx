import type { ReactNode } from 'react';
import { useHydrated } from '@/lib/client/useHydrated';

/**
 * Wraps a form's controls: disabled until the island has hydrated, so input typed into
 * the server-rendered HTML cannot be dropped when React takes over. It lays out as if it
 * were not there (display: contents), so the form's own grid or flex still applies.
 */
export function HydratedFieldset({ children }: { children: ReactNode }) {
  const hydrated = useHydrated();
  return (
    <fieldset disabled={!hydrated} className="contents" data-hydrated={hydrated}>
      {children}
    </fieldset>
  );
}
