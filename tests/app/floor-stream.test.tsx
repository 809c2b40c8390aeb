/** useFloorStream: when the server ends the stream with its session, the app stops it and re-asks who is signed in. */
import { act, renderHook } from '@testing-library/react-native';
import { QueryClientProvider } from '@tanstack/react-query';
import type { ReactNode } from 'react';
import { useFloorStream } from '@/components/queries/floor';
import { keys } from '@/components/queries/keys';
import { testQueryClient } from './support/render';

class FakeEventSource {
  static last: FakeEventSource | null = null;
  closed = false;
  onopen: (() => void) | null = null;
  onerror: (() => void) | null = null;
  private readonly listeners = new Map<string, Array<(e: { data: string }) => void>>();
  constructor(readonly url: string) {
    FakeEventSource.last = this;
  }
  addEventListener(name: string, fn: (e: { data: string }) => void) {
    this.listeners.set(name, [...(this.listeners.get(name) ?? []), fn]);
  }
  emit(name: string, data: string) {
    for (const fn of this.listeners.get(name) ?? []) fn({ data });
  }
  close() {
    this.closed = true;
  }
}

const g = globalThis as { EventSource?: unknown };
let saved: unknown;
beforeEach(() => {
  saved = g.EventSource;
  g.EventSource = FakeEventSource;
});
afterEach(() => {
  g.EventSource = saved;
});

test('an `end` event closes the stream and invalidates the signed-in user', async () => {
  const client = testQueryClient();
  client.setQueryData(keys.me, { id: 'u1', email: 'op@harrowgate.example', name: 'Op', role: 'operator' });
  const wrapper = ({ children }: { children: ReactNode }) => <QueryClientProvider client={client}>{children}</QueryClientProvider>;
  renderHook(() => useFloorStream(), { wrapper });
  const es = FakeEventSource.last!;
  expect(es.url).toBe('/api/floor/stream');
  expect(es.closed).toBe(false);
  expect(client.getQueryState(keys.me)?.isInvalidated).toBe(false);
  await act(async () => es.emit('end', JSON.stringify({ type: 'end', reason: 'signed out' })));
  expect(es.closed).toBe(true);
  expect(client.getQueryState(keys.me)?.isInvalidated).toBe(true);
});
