import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { AddSerialsInput, Lot, LotDetail, LotInput, LotPatch, SerialRowProblem } from '@/shared/schemas/devices';
import type { ErrorCode } from '@/shared/schemas/errors';
import { api, ApiError, REQUEST_TIMEOUT_MS, serverBody } from './api';
import { CATALOG_STALE_MS, catalogKeys } from './device-types';

export function useLots(filter: { deviceTypeId?: string; q?: string } = {}) {
  const qs = new URLSearchParams();
  if (filter.deviceTypeId) qs.set('deviceTypeId', filter.deviceTypeId);
  if (filter.q) qs.set('q', filter.q);
  return useQuery({
    queryKey: catalogKeys.lots.list(filter),
    queryFn: ({ signal }) => api<{ items: Lot[] }>(`/api/lots${qs.size ? `?${qs}` : ''}`, { signal }).then((r) => r.items),
    staleTime: CATALOG_STALE_MS,
  });
}

export function useLot(id: string | undefined) {
  return useQuery({
    queryKey: catalogKeys.lots.one(id ?? ''),
    queryFn: ({ signal }) => api<LotDetail>(`/api/lots/${encodeURIComponent(id!)}`, { signal }),
    enabled: !!id,
    staleTime: CATALOG_STALE_MS,
  });
}

/** The bad rows of a refused serial list, when the error carries them (422 from the lot routes). */
/** The error answer of the serials upload: the usual error, with the rejected rows. */
type SerialsErrorBody = { error?: { code?: ErrorCode; message?: string; fields?: Record<string, string[]>; rows?: SerialRowProblem[] } };

export class SerialRowsError extends ApiError {
  constructor(
    status: number,
    message: string,
    readonly rows: SerialRowProblem[],
    fields?: Record<string, string[]>,
  ) {
    super(status, 'unprocessable', message, fields);
  }
}

/** Rows from an ApiError's fields ("serials.3" / "line.7" → reason), for errors raised through api(). */
export function rowsFromError(e: unknown, serials?: string[]): SerialRowProblem[] {
  if (e instanceof SerialRowsError) return e.rows;
  if (!(e instanceof ApiError) || !e.fields) return [];
  const out: SerialRowProblem[] = [];
  for (const [k, reasons] of Object.entries(e.fields)) {
    const m = /^(serials|line)\.(\d+)$/.exec(k);
    if (!m) continue;
    const row = Number(m[2]);
    out.push({ row, serial: m[1] === 'serials' && serials ? (serials[row - 1] ?? '') : '', reason: reasons[0] ?? '' });
  }
  return out.sort((a, b) => a.row - b.row);
}

/** A file picked in the browser (web File/Blob) with its name. */
export interface PickedFile {
  name: string;
  blob: Blob;
}

async function upload<T>(path: string, file: PickedFile): Promise<T> {
  const fd = new FormData();
  fd.append('file', file.blob, file.name);
  const controller = new AbortController();
  const timer = setTimeout(() => controller.abort(), REQUEST_TIMEOUT_MS);
  let res: Response;
  try {
    res = await fetch(path, {
      method: 'POST',
      body: fd,
      credentials: 'include',
      headers: { Accept: 'application/json' },
      signal: controller.signal,
    });
  } catch {
    throw new ApiError(0, controller.signal.aborted ? 'timeout' : 'network', 'Emberlot could not reach the server.');
  } finally {
    clearTimeout(timer);
  }
  let body: unknown = undefined;
  try {
    body = await res.json();
  } catch {
    if (!res.ok) throw new ApiError(res.status, 'bad_response', `The server answered ${res.status}.`);
  }
  if (res.ok) return serverBody<T>(body);
  const err = serverBody<SerialsErrorBody | undefined>(body)?.error;
  if (err && Array.isArray(err.rows)) throw new SerialRowsError(res.status, String(err.message), err.rows, err.fields);
  throw new ApiError(
    res.status,
    err?.code ?? (res.status === 413 ? 'too_large' : 'bad_request'),
    String(err?.message ?? `The server answered ${res.status}.`),
    err?.fields,
  );
}

export function useCreateLot() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: LotInput) => api<LotDetail>('/api/lots', { method: 'POST', body: input }),
    onSuccess: () =>
      Promise.all([
        qc.invalidateQueries({ queryKey: catalogKeys.lots.all }),
        qc.invalidateQueries({ queryKey: catalogKeys.deviceTypes.all }),
      ]),
  });
}

/** Changes a lot's date code, notes and traceability fields (PATCH /api/lots/:id). */
export function useUpdateLot(lotId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (patch: LotPatch) => api<LotDetail>(`/api/lots/${encodeURIComponent(lotId)}`, { method: 'PATCH', body: patch }),
    onSuccess: (lot) => {
      qc.setQueryData(catalogKeys.lots.one(lot.id), lot);
      return qc.invalidateQueries({ queryKey: catalogKeys.lots.all });
    },
  });
}

export function useAddSerials(lotId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: AddSerialsInput) =>
      api<LotDetail>(`/api/lots/${encodeURIComponent(lotId)}/serials`, { method: 'POST', body: input }),
    onSuccess: (lot) => {
      qc.setQueryData(catalogKeys.lots.one(lot.id), lot);
      return Promise.all([
        qc.invalidateQueries({ queryKey: catalogKeys.lots.all }),
        qc.invalidateQueries({ queryKey: catalogKeys.deviceTypes.all }),
      ]);
    },
  });
}

export function useUploadSerials(lotId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (file: PickedFile) => upload<LotDetail>(`/api/lots/${encodeURIComponent(lotId)}/serials/csv`, file),
    onSuccess: (lot) => {
      qc.setQueryData(catalogKeys.lots.one(lot.id), lot);
      return Promise.all([
        qc.invalidateQueries({ queryKey: catalogKeys.lots.all }),
        qc.invalidateQueries({ queryKey: catalogKeys.deviceTypes.all }),
      ]);
    },
  });
}

/** Reads a serial file for the new-lot form; stores nothing. */
export function useParseSerialFile() {
  return useMutation({
    mutationFn: (file: PickedFile) =>
      upload<{ serials: string[]; rows: SerialRowProblem[]; total: number }>('/api/lots/serials/parse-csv', file),
  });
}
