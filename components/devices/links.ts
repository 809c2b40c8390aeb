import type { Href } from 'expo-router';

/** Where a device type and a lot live. Own module: importing them must not pull a whole screen into the shared chunk. */
export const deviceHref = (id: string) => `/devices/${id}` as Href;
export const lotHref = (id: string) => `/devices/lots/${id}` as Href;
/** One device's whole history (app/(shell)/devices/units/[id].tsx). */
export const deviceHistoryHref = (deviceId: string) => `/devices/units/${encodeURIComponent(deviceId)}` as Href;
