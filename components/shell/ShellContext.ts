import { createContext } from 'react';

/** True inside the signed-in shell: parts that need a session (the notification bell) show only there. */
export const InShell = createContext(false);
