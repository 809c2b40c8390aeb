import type { Journey } from '../harness';
import { accessibilityEveryScreen } from './accessibility';
import { adminRigs } from './admin-rigs';
import { operatorCycling } from './cycling';
import { engineerPlanBook } from './engineer';
import { engineerSplitSample, operatorReadPointEvidence } from './evidence';
import { adminPeople, signInErrors, signInEveryRole } from './foundation';
import { holdsReadPoint } from './holds';
import { managerTrends } from './manager';
import { forecastJourney } from './forecast';
import { managerLotCredit } from './credit';
import { managerLotVerdicts } from './verdicts';
import { operatorFloor } from './operator';
import { engineerRatings } from './ratings';
import { operatorCorrectReading } from './records';
import { engineerTripReset } from './trip-reset';
import { signoffApprovalsAudit } from './signoff';
import { operatorStartPermit } from './start-permit';
import { traceabilityReports } from './traceability';
import { managerReplan } from './replan';
import { managerCalendar } from './calendar';
import { qualification } from './qualification';
import { workingDay } from './working-day';
import { engineerMakeUp } from './make-up';
import { rigChartSpans } from './chart-spans';
import { chamberFloor } from './chamber';
import { thermal } from './thermal';

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
  // Signs HG2609-D's verdict (approved for release) to download its certificate.
  traceabilityReports,
  // Reads the demo's due dates on the schedule and proposes (does not accept) a new order.
  managerCalendar,
  // Reads the demo qualifications (HG2612-C under stress) and makes one of its own: before the run started on OV-04.
  qualification,
  // Reads the demo bookings (OV-02, OV-06) and previews files only: before the start-permit journey books OV-04.
  workingDay,
  // Books and starts a run on OV-04 (idle in the demo): after every journey that reads the schedule.
  operatorStartPermit,
  // Books on OV-01 weeks ahead, puts it into maintenance and moves the run; cleans up after itself.
  managerReplan,
  // Every screen of every role under axe: after the journeys that add data, before the offline rig.
  accessibilityEveryScreen,
  adminRigs,
  // Books a make-up of two into HG2612-C's sample (the first size; the second finds it restored).
  engineerMakeUp,
  // Reads OV-01's chart at every period (reads only).
  rigChartSpans,
  // The verdict forecast (issue #25): reads HG2612-C and sets the alert level (nothing later reads it).
  forecastJourney,
  // Chambers on the floor, their page and QUAL-001's TC cell (reads only; the cycle count must still be moving).
  chamberFloor,
  // The socket thermal model: reads OV-03's drying pad (demo fleet), its sheet and the alarms list.
  thermal,
];
