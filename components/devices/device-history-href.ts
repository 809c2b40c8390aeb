import type { Href } from 'expo-router';

/** The page of one device's whole history (app/(shell)/devices/units/[id].tsx). */
export const deviceHistoryHref = (deviceId: string) => `/devices/units/${encodeURIComponent(deviceId)}` as Href;
