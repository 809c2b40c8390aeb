import type { Journey } from '../harness';
import { adminRigs } from './admin-rigs';
import { operatorCycling } from './cycling';
import { engineerPlanBook } from './engineer';
import { engineerSplitSample, operatorReadPointEvidence } from './evidence';
import { adminPeople, signInErrors, signInEveryRole } from './foundation';
import { holdsReadPoint } from './holds';
import { managerTrends } from './manager';
import { managerLotCredit } from './credit';
import { managerLotVerdicts } from './verdicts';
import { operatorFloor } from './operator';
import { engineerRatings } from './ratings';
import { operatorCorrectReading } from './records';
import { engineerTripReset } from './trip-reset';
import { signoffApprovalsAudit } from './signoff';
import { operatorStartPermit } from './start-permit';
import { workingDay } from './working-day';

/**
 * Every browser journey, run at phone and wide size. Feature journeys join this list.
 * admin-rigs stays last: the rig it registers is offline and would show in the others' screens.
 */
export const JOURNEYS: Journey[] = [
  signInEveryRole,
  signInErrors,
  adminPeople,
  engineerPlanBook,
  engineerSplitSample,
  operatorFloor,
  managerTrends,
  // Before the evidence journey: that one enters dead devices on HG2611-B, whose missing 1000 h
  // readings this one shows as an incomplete read point.
  managerLotVerdicts,
  operatorReadPointEvidence,
  operatorCycling,
  managerLotCredit,
  engineerTripReset,
  engineerRatings,
  // Corrects a 168 h reading of HG2612-C (in progress): after every journey that reads that lot.
  operatorCorrectReading,
  signoffApprovalsAudit,
  holdsReadPoint,
  // Reads the demo bookings (OV-02, OV-06) and previews files only: before the start-permit journey books OV-04.
  workingDay,
  // Books and starts a run on OV-04 (idle in the demo): after every journey that reads the schedule.
  operatorStartPermit,
  adminRigs,
];
