import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { useState, type ReactNode } from 'react';

/** Each island gets its own query client; data are fetched fresh on mount. */
export function QueryRoot({ children }: { children: ReactNode }) {
  const [client] = useState(
    () => new QueryClient({ defaultOptions: { queries: { retry: 1, refetchOnWindowFocus: false, staleTime: 5_000 } } }),
  );
  return <QueryClientProvider client={client}>{children}</QueryClientProvider>;
}
