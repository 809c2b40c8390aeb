import type { ReactElement } from 'react';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { render } from '@testing-library/react-native';
import { SafeAreaProvider } from 'react-native-safe-area-context';

/** gcTime Infinity: with the default 5-minute gc timer jest waits minutes after the last test. */
export function testQueryClient() {
  return new QueryClient({
    defaultOptions: { queries: { retry: false, gcTime: Infinity }, mutations: { retry: false, gcTime: Infinity } },
  });
}

const metrics = { frame: { x: 0, y: 0, width: 390, height: 844 }, insets: { top: 0, left: 0, right: 0, bottom: 0 } };

export function renderWithClient(ui: ReactElement, client: QueryClient = testQueryClient()) {
  const utils = render(
    <SafeAreaProvider initialMetrics={metrics}>
      <QueryClientProvider client={client}>{ui}</QueryClientProvider>
    </SafeAreaProvider>,
  );
  return { ...utils, client };
}

type Route = { status: number; body?: unknown };

/** Replaces global fetch with a table of "METHOD /path" → answer; records every call. */
export function mockFetch(routes: Record<string, Route | ((init: RequestInit) => Route)>) {
  const fn = jest.fn(async (url: string, init: RequestInit = {}) => {
    const key = `${init.method ?? 'GET'} ${url}`;
    const r = routes[key];
    const ans =
      typeof r === 'function' ? r(init) : (r ?? { status: 404, body: { error: { code: 'not_found', message: `No mock for ${key}` } } });
    return {
      ok: ans.status >= 200 && ans.status < 300,
      status: ans.status,
      text: async () => (ans.body === undefined ? '' : JSON.stringify(ans.body)),
    };
  });
  (global as unknown as { fetch: unknown }).fetch = fn;
  return fn;
}

/** Makes useBreakpoints report a given window width. Call before rendering. */
export function setWidth(width: number) {
  const rn = require('react-native');
  jest.spyOn(rn, 'useWindowDimensions').mockReturnValue({ width, height: 900, scale: 1, fontScale: 1 });
}
