/** Tones of a cell's state and a qualification's status (screens only). */
import type { CellState, QualificationStatus } from '@/shared/qualification/words';

export const CELL_TONE: Record<CellState, 'ok' | 'attention' | 'danger' | 'idle' | 'info'> = {
  'not-started': 'idle',
  booked: 'info',
  'under-stress': 'attention',
  'awaiting-verdict': 'attention',
  passed: 'ok',
  failed: 'danger',
  waived: 'info',
};

export const STATUS_TONE: Record<QualificationStatus, 'ok' | 'attention' | 'danger'> = {
  'in-progress': 'attention',
  complete: 'ok',
  failed: 'danger',
};
