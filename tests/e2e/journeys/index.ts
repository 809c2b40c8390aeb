import type { Journey } from '../harness';
import { adminPeople, signInErrors, signInEveryRole } from './foundation';

/** Every browser journey, run at phone and wide size. Feature journeys join this list. */
export const JOURNEYS: Journey[] = [signInEveryRole, signInErrors, adminPeople];
