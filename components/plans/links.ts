import type { Href } from 'expo-router';
import type { PlanKind } from '@/shared/schemas/plans';

/** Where a plan lives, and each kind's short name. Own module: importing them must not pull the plan list into the shared chunk. */
export const planHref = (id: string) => `/plans/${id}` as Href;

export const KIND_SHORT: Record<PlanKind, string> = {
  htrb: 'HTRB',
  hotl: 'Powered life',
  iol: 'Intermittent life',
  thb: 'THB',
  tc: 'Temp cycling',
  htsl: 'Storage',
  ac: 'Autoclave',
};
