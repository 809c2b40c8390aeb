/**
 * Live floor data. ONE live mechanism: the server-sent event stream GET /api/floor/stream, opened
 * once by useFloorStream() (mounted by the floor screens). Each `tile` event replaces that rig's
 * tile in the cached floor list and marks its socket board stale (refetched while shown), so an
 * update reaches the screen within ~1–2 s of the telemetry. Where EventSource does not exist (a
 * native build) the same hook falls back to refetching the floor every 2 s.
 */
import { useEffect, useState } from 'react';
import { useQuery, useQueryClient } from '@tanstack/react-query';
import type { FloorBoard, FloorChart, FloorTile } from '@/shared/schemas/floor';
import { api, serverBody } from './api';
import { keys, STALE } from './keys';

export const floorKeys = {
  all: ['floor'] as const,
  tiles: () => ['floor', 'tiles'] as const,
  board: (code: string) => ['floor', 'board', code] as const,
  chart: (code: string, span: string, sockets: string) => ['floor', 'chart', code, span, sockets] as const,
  charts: (code: string) => ['floor', 'chart', code] as const,
};

/** Fallback poll period without EventSource. */
export const FLOOR_POLL_MS = 2_000;
/** A chart refetches at most this often while tile events arrive. */
export const CHART_REFRESH_MS = 10_000;

const enc = encodeURIComponent;
const hasEventSource = () =>
  typeof globalThis !== 'undefined' && typeof (globalThis as { EventSource?: unknown }).EventSource === 'function';

export function useFloor() {
  return useQuery({
    queryKey: floorKeys.tiles(),
    queryFn: ({ signal }) => api<{ items: FloorTile[] }>('/api/floor', { signal }).then((r) => r.items),
    staleTime: STALE.live,
    refetchInterval: hasEventSource() ? false : FLOOR_POLL_MS,
  });
}

export function useRigBoard(code: string) {
  return useQuery({
    queryKey: floorKeys.board(code),
    queryFn: ({ signal }) => api<FloorBoard>(`/api/floor/rigs/${enc(code)}`, { signal }),
    staleTime: STALE.live,
    refetchInterval: hasEventSource() ? false : FLOOR_POLL_MS,
    enabled: !!code,
  });
}

export type ChartSpan = '15m' | '1h' | '6h' | '24h' | '7d' | '30d' | '1y';
const DAY_MS = 24 * 3_600_000;
export const CHART_SPAN_MS: Record<ChartSpan, number> = {
  '15m': 15 * 60_000,
  '1h': 3_600_000,
  '6h': 6 * 3_600_000,
  '24h': DAY_MS,
  '7d': 7 * DAY_MS,
  '30d': 30 * DAY_MS,
  '1y': 365 * DAY_MS,
};
/**
 * Spans of days and more read hourly rollups (shared/domain/telemetry-tiers.ts): a point covers
 * hours, so they refresh every few minutes instead of with each tile event.
 */
export const LONG_CHART_SPANS: ReadonlySet<string> = new Set<ChartSpan>(['7d', '30d', '1y']);
export const LONG_CHART_REFRESH_MS = 5 * 60_000;

export function useRigChart(code: string, span: ChartSpan, sockets: number[], points = 300) {
  const list = [...sockets].sort((a, b) => a - b).join(',');
  return useQuery({
    queryKey: floorKeys.chart(code, span, list),
    queryFn: ({ signal }) => {
      const to = new Date();
      const from = new Date(to.getTime() - CHART_SPAN_MS[span]);
      const q = `from=${enc(from.toISOString())}&to=${enc(to.toISOString())}&points=${points}${list ? `&sockets=${list}` : ''}`;
      return api<FloorChart>(`/api/floor/rigs/${enc(code)}/chart?${q}`, { signal });
    },
    staleTime: LONG_CHART_SPANS.has(span) ? LONG_CHART_REFRESH_MS : CHART_REFRESH_MS,
    refetchInterval: LONG_CHART_SPANS.has(span) ? LONG_CHART_REFRESH_MS : false,
    placeholderData: (prev) => prev,
    enabled: !!code,
  });
}

export type StreamState = 'connecting' | 'live' | 'reconnecting' | 'polling';

/** Opens the floor event stream while mounted; returns its state for a small indicator. */
export function useFloorStream(): StreamState {
  const qc = useQueryClient();
  const [state, setState] = useState<StreamState>(hasEventSource() ? 'connecting' : 'polling');
  useEffect(() => {
    if (!hasEventSource()) return;
    const es = new EventSource('/api/floor/stream', { withCredentials: true });
    const lastChart = new Map<string, number>();
    let wasLive = false;
    es.onopen = () => {
      setState('live');
      // After a reconnect, events may have been missed: fetch the whole floor once.
      if (wasLive) void qc.invalidateQueries({ queryKey: floorKeys.tiles() });
      wasLive = true;
    };
    es.onerror = () => setState('reconnecting');
    // The server ends the stream with its session (sign-out elsewhere, expiry, deactivation): stop,
    // and let /me find out who is signed in (the shell then shows the sign-in screen).
    es.addEventListener('end', () => {
      es.close();
      void qc.invalidateQueries({ queryKey: keys.me });
    });
    es.addEventListener('tile', (e) => {
      let tile: FloorTile;
      try {
        tile = serverBody<{ tile: FloorTile }>(JSON.parse((e as MessageEvent<string>).data)).tile;
      } catch {
        return;
      }
      qc.setQueryData<FloorTile[]>(floorKeys.tiles(), (list) => {
        if (!list) return list;
        const i = list.findIndex((t) => t.rigId === tile.rigId);
        if (i < 0) return [...list, tile];
        const next = list.slice();
        next[i] = tile;
        return next;
      });
      qc.setQueryData<FloorBoard>(floorKeys.board(tile.code), (b) => (b ? { ...b, tile } : b));
      void qc.invalidateQueries({ queryKey: floorKeys.board(tile.code) });
      const now = Date.now();
      if (now - (lastChart.get(tile.code) ?? 0) >= CHART_REFRESH_MS) {
        lastChart.set(tile.code, now);
        void qc.invalidateQueries({
          queryKey: floorKeys.charts(tile.code),
          predicate: (q) => !LONG_CHART_SPANS.has(String(q.queryKey[3])),
        });
      }
    });
    return () => es.close();
  }, [qc]);
  return state;
}
