import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  CorrectionInput,
  DeviceHistory,
  ManualReading,
  MeasurementRunDetail,
  MeasurementRunSummary,
  RowResult,
  StoredReading,
  UploadRecord,
  UploadResult,
  ColumnMapping,
} from '@/shared/schemas/measurements';
import { readApiError } from '@/shared/domain/api-error';
import { api, ApiError, serverBody } from './api';

export const measurementKeys = {
  all: ['measurements'] as const,
  runs: () => ['measurements', 'runs'] as const,
  run: (id: string) => ['measurements', 'runs', id] as const,
  readings: (id: string, h: number) => ['measurements', 'runs', id, 'read-points', h] as const,
  history: (id: string, deviceId: string) => ['measurements', 'runs', id, 'history', deviceId] as const,
  uploads: (id: string) => ['measurements', 'runs', id, 'uploads'] as const,
};

const STALE_MS = 30_000;

export function useMeasurementRuns() {
  return useQuery({
    queryKey: measurementKeys.runs(),
    queryFn: ({ signal }) => api<{ items: MeasurementRunSummary[] }>('/api/measurements/runs', { signal }).then((r) => r.items),
    staleTime: STALE_MS,
  });
}

/** The readings stored for one read point (the coverage panel lists the flagged ones). */
export function useReadPointReadings(id: string | undefined, hours: number | undefined) {
  return useQuery({
    queryKey: measurementKeys.readings(id ?? '', hours ?? -1),
    queryFn: ({ signal }) =>
      api<{ items: StoredReading[] }>(`/api/measurements/runs/${encodeURIComponent(id!)}/read-points/${hours}`, { signal }).then(
        (r) => r.items,
      ),
    enabled: !!id && hours !== undefined,
    staleTime: STALE_MS,
  });
}

export function useMeasurementRun(id: string | undefined) {
  return useQuery({
    queryKey: measurementKeys.run(id ?? ''),
    queryFn: ({ signal }) => api<MeasurementRunDetail>(`/api/measurements/runs/${encodeURIComponent(id!)}`, { signal }),
    enabled: !!id,
    staleTime: STALE_MS,
  });
}

/** A refused upload or entry that says, row by row, what was wrong (422 with `rows`). */
export class RowsError extends ApiError {
  constructor(
    status: number,
    message: string,
    readonly rows: RowResult[],
  ) {
    super(status, 'unprocessable', message);
  }
}

/** What the picker hands over: a browser File/Blob on web, or a local file reference on a phone. */
export type PickedFile = { name: string; size: number; blob?: Blob; uri?: string; type?: string };

export interface UploadInput {
  runId: string;
  hours: number;
  preview: boolean;
  file: PickedFile;
  mapping: ColumnMapping;
  defaultTempC: number;
  /** Why the file replaces stored readings (needed when it does). */
  reason?: string;
  onProgress?: (fraction: number) => void;
}

/** Multipart upload through XMLHttpRequest so the screen can show progress. */
export function uploadReadings(input: UploadInput): Promise<UploadResult> {
  return new Promise((resolve, reject) => {
    const form = new FormData();
    form.append('mapping', JSON.stringify(input.mapping));
    form.append('defaultTempC', String(input.defaultTempC));
    if (input.reason) form.append('reason', input.reason);
    if (input.file.blob) form.append('file', input.file.blob, input.file.name);
    else form.append('file', { uri: input.file.uri, name: input.file.name, type: input.file.type ?? 'text/csv' } as unknown as Blob);
    const xhr = new XMLHttpRequest();
    const url = `/api/measurements/runs/${encodeURIComponent(input.runId)}/read-points/${input.hours}/upload${input.preview ? '?preview=1' : ''}`;
    xhr.open('POST', url);
    xhr.withCredentials = true;
    xhr.setRequestHeader('Accept', 'application/json');
    xhr.timeout = 60_000;
    xhr.upload.onprogress = (e) => {
      if (e.lengthComputable && input.onProgress) input.onProgress(e.loaded / e.total);
    };
    xhr.onerror = () => reject(new ApiError(0, 'network', 'Emberlot could not reach the server.'));
    xhr.ontimeout = () => reject(new ApiError(0, 'timeout', 'The server took too long to answer.'));
    xhr.onload = () => {
      let body: unknown;
      try {
        body = xhr.responseText ? JSON.parse(xhr.responseText) : undefined;
      } catch {
        return reject(new ApiError(xhr.status, 'bad_response', 'The server sent an answer Emberlot could not read.'));
      }
      if (xhr.status >= 200 && xhr.status < 300) return resolve(serverBody<UploadResult>(body));
      const error = readApiError(body);
      if (!error) return reject(new ApiError(xhr.status, 'internal', `The server answered ${xhr.status}.`));
      const rows = serverBody<{ error: { rows?: RowResult[] } }>(body).error.rows;
      if (rows) return reject(new RowsError(xhr.status, error.message, rows));
      reject(new ApiError(xhr.status, error.code, error.message, error.fields));
    };
    xhr.send(form);
  });
}

export function useUploadReadings() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: uploadReadings,
    onSuccess: (r, input) => {
      if (!input.preview) return qc.invalidateQueries({ queryKey: measurementKeys.all });
    },
  });
}

/** Manual entry: all devices or none; a 422 carries the rows. */
export function useManualEntry() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: async (p: { runId: string; hours: number; items: ManualReading[] }) => {
      const res = await fetch(`/api/measurements/runs/${encodeURIComponent(p.runId)}/read-points/${p.hours}/measurements`, {
        method: 'POST',
        credentials: 'include',
        headers: { 'Content-Type': 'application/json', Accept: 'application/json' },
        body: JSON.stringify(p.items),
      }).catch(() => {
        throw new ApiError(0, 'network', 'Emberlot could not reach the server.');
      });
      const body = await res.json().catch(() => undefined);
      if (res.ok) return serverBody<UploadResult>(body);
      const error = readApiError(body);
      if (!error) throw new ApiError(res.status, 'internal', `The server answered ${res.status}.`);
      const rows = serverBody<{ error: { rows?: RowResult[] } }>(body).error.rows;
      if (rows) throw new RowsError(res.status, error.message, rows);
      throw new ApiError(res.status, error.code, error.message, error.fields);
    },
    onSuccess: () => qc.invalidateQueries({ queryKey: measurementKeys.all }),
  });
}

/** Every version of one device's readings in a run (reason, person, time of each correction). */
export function useDeviceHistory(runId: string, deviceId: string | undefined) {
  return useQuery({
    queryKey: measurementKeys.history(runId, deviceId ?? ''),
    queryFn: ({ signal }) =>
      api<DeviceHistory>(`/api/measurements/runs/${encodeURIComponent(runId)}/devices/${encodeURIComponent(deviceId!)}/history`, {
        signal,
      }),
    enabled: !!deviceId,
    staleTime: STALE_MS,
  });
}

/** The run's stored uploads, each with the path of its kept file. */
export function useRunUploads(runId: string) {
  return useQuery({
    queryKey: measurementKeys.uploads(runId),
    queryFn: ({ signal }) =>
      api<{ items: UploadRecord[] }>(`/api/measurements/runs/${encodeURIComponent(runId)}/uploads`, { signal }).then((r) => r.items),
    staleTime: STALE_MS,
  });
}

/** A correction: a new version of one reading, with its reason. */
export function useCorrectReading() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (p: { id: string; body: CorrectionInput }) =>
      api<StoredReading>(`/api/measurements/readings/${encodeURIComponent(p.id)}/corrections`, { method: 'POST', body: p.body }),
    onSuccess: () => qc.invalidateQueries({ queryKey: measurementKeys.all }),
  });
}
