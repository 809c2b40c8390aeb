/**
 * The demo scenario: the reliability lab of Harrowgate Power Devices, an invented maker of
 * discrete power transistors. Every name, part number, lot and person here is made up.
 */
import type { RigKind } from '../../shared/domain/rig-kinds';
import type { Role } from '../../shared/roles';
import type { DeviceTypeInput } from '../../shared/schemas/devices';

export const DEMO_COMPANY = 'Harrowgate Power Devices';

export const DEMO_USERS: Array<{ email: string; name: string; role: Role; password: string }> = [
  { email: 'admin@harrowgate-lab.example', name: 'Marta Oyelaran', role: 'admin', password: 'harrow-admin-1' },
  { email: 'engineer@harrowgate-lab.example', name: 'Tobias Renwick', role: 'engineer', password: 'harrow-engineer-1' },
  { email: 'operator@harrowgate-lab.example', name: 'Priya Castell', role: 'operator', password: 'harrow-operator-1' },
  { email: 'manager@harrowgate-lab.example', name: 'Henrik Aldous', role: 'manager', password: 'harrow-manager-1' },
];

/** Optional here: the hot-leakage point and the S/b line (absent = none / the defaults, as the database columns say). */
type OptionalRatings = 'icboHotA' | 'icboHotC' | 'icboHotVcbV' | 'sbKneeV' | 'sbSlopeN';
type DemoType = Omit<DeviceTypeInput, 'description' | OptionalRatings> &
  Partial<Pick<DeviceTypeInput, OptionalRatings>> & { description: string };

export const DEMO_DEVICE_TYPES: DemoType[] = [
  {
    partNumber: 'HPD-2N140',
    description: 'NPN medium-power switching transistor, 140 V, TO-126 style',
    kind: 'bjt',
    polarity: 'NPN',
    bvcboV: 140,
    bvceoV: 80,
    bveboV: 6,
    icMaxA: 1.5,
    pMaxW: 12.5,
    pRatedAtC: 25,
    tjMaxC: 150,
    tstgMinC: -65,
    tstgMaxC: 150,
    thetaJcCPerW: 10,
    thetaJaCPerW: 83.3,
    betaRef: 120,
    betaRefIcA: 0.15,
    betaRefTC: 25,
    xtb: 1.6,
    icboRefA: 20e-9,
    breakdownN: 3,
  },
  {
    partNumber: 'HPD-3P90',
    description: 'PNP power transistor, 100 V / 3 A, TO-220 style',
    kind: 'bjt',
    polarity: 'PNP',
    bvcboV: 100,
    bvceoV: 60,
    bveboV: 5,
    icMaxA: 3,
    pMaxW: 40,
    pRatedAtC: 25,
    tjMaxC: 150,
    tstgMinC: -65,
    tstgMaxC: 150,
    thetaJcCPerW: 3.125,
    thetaJaCPerW: 62.5,
    betaRef: 70,
    betaRefIcA: 1,
    betaRefTC: 25,
    xtb: 1.5,
    icboRefA: 50e-9,
    breakdownN: 3,
  },
  {
    partNumber: 'HPD-7N400',
    description: 'High-voltage NPN for line-operated supplies, 700 V VCBO',
    kind: 'bjt',
    polarity: 'NPN',
    bvcboV: 700,
    bvceoV: 400,
    bveboV: 9,
    icMaxA: 8,
    pMaxW: 80,
    pRatedAtC: 25,
    tjMaxC: 150,
    tstgMinC: -65,
    tstgMaxC: 150,
    thetaJcCPerW: 1.56,
    thetaJaCPerW: 62.5,
    betaRef: 25,
    betaRefIcA: 2,
    betaRefTC: 25,
    xtb: 1.4,
    icboRefA: 100e-9,
    // Invented hot-leakage point, as a data sheet states it: ICBO ≤ 10 µA at Tc 150 °C, VCB 700 V
    // (the 25 °C figure is a guaranteed maximum well above typical, so the two-point law doubles
    // every ~19 °C). With it the part's HTRB at Tj max passes the plan check.
    icboHotA: 10e-6,
    icboHotC: 150,
    icboHotVcbV: 700,
    breakdownN: 4,
  },
  {
    partNumber: 'HPD-S230',
    description: 'Small-signal NPN, 40 V, SOT-23 style',
    kind: 'bjt',
    polarity: 'NPN',
    bvcboV: 75,
    bvceoV: 40,
    bveboV: 6,
    icMaxA: 0.6,
    pMaxW: 0.625,
    pRatedAtC: 25,
    tjMaxC: 150,
    tstgMinC: -65,
    tstgMaxC: 150,
    thetaJcCPerW: 83.3,
    thetaJaCPerW: 200,
    betaRef: 150,
    betaRefIcA: 0.01,
    betaRefTC: 25,
    xtb: 1.5,
    icboRefA: 10e-9,
    breakdownN: 3,
  },
];

/** Lots, with the drift the simulator gives them (per 1000 stress hours). */
export const DEMO_LOTS: Array<{
  code: string;
  partNumber: string;
  quantity: number;
  dateCode: string;
  notes: string;
  /** Traceability (invented codes): wafer lot, assembly lot, die revision. */
  waferLot: string;
  assemblyLot: string;
  dieRevision: string;
  hfeDriftPctPer1000h: number;
  leakageGrowthPer1000h: number;
}> = [
  {
    code: 'HG2611-A',
    partNumber: 'HPD-2N140',
    quantity: 2400,
    dateCode: '2611',
    notes: 'Line 2',
    waferLot: 'W88',
    assemblyLot: 'A2611-07',
    dieRevision: 'C',
    hfeDriftPctPer1000h: -2.5,
    leakageGrowthPer1000h: 1.2,
  },
  {
    code: 'HG2611-B',
    partNumber: 'HPD-2N140',
    quantity: 2400,
    dateCode: '2611',
    notes: 'Line 2',
    waferLot: 'W91',
    assemblyLot: 'A2611-09',
    dieRevision: 'C',
    hfeDriftPctPer1000h: -3.0,
    leakageGrowthPer1000h: 1.3,
  },
  {
    code: 'HG2612-C',
    partNumber: 'HPD-2N140',
    quantity: 1800,
    dateCode: '2612',
    notes: 'New passivation recipe trial',
    waferLot: 'W94',
    assemblyLot: 'A2612-02',
    dieRevision: 'D',
    hfeDriftPctPer1000h: -14,
    leakageGrowthPer1000h: 3.8,
  },
  {
    code: 'HG2609-D',
    partNumber: 'HPD-3P90',
    quantity: 3000,
    dateCode: '2609',
    notes: '',
    waferLot: 'W72',
    assemblyLot: 'A2609-04',
    dieRevision: 'B',
    hfeDriftPctPer1000h: -1.8,
    leakageGrowthPer1000h: 1.1,
  },
  {
    code: 'HG2610-E',
    partNumber: 'HPD-3P90',
    quantity: 3000,
    dateCode: '2610',
    notes: '',
    waferLot: 'W77',
    assemblyLot: 'A2610-01',
    dieRevision: 'B',
    hfeDriftPctPer1000h: -2.2,
    leakageGrowthPer1000h: 1.2,
  },
  {
    code: 'HG2608-F',
    partNumber: 'HPD-7N400',
    quantity: 1200,
    dateCode: '2608',
    notes: 'Customer qualification lot',
    waferLot: 'W65',
    assemblyLot: 'A2608-03',
    dieRevision: 'A',
    hfeDriftPctPer1000h: -3.5,
    leakageGrowthPer1000h: 1.4,
  },
  {
    code: 'HG2612-G',
    partNumber: 'HPD-7N400',
    quantity: 1200,
    dateCode: '2612',
    notes: '',
    waferLot: 'W96',
    assemblyLot: 'A2612-05',
    dieRevision: 'A',
    hfeDriftPctPer1000h: -4.0,
    leakageGrowthPer1000h: 1.5,
  },
  {
    code: 'HG2605-H',
    partNumber: 'HPD-S230',
    quantity: 20000,
    dateCode: '2605',
    notes: 'Reel stock',
    waferLot: 'W51',
    assemblyLot: 'A2605-11',
    dieRevision: 'E',
    hfeDriftPctPer1000h: -1.2,
    leakageGrowthPer1000h: 1.05,
  },
];

/** Devices registered per lot in the demo (the sample pulled for stress plus spares). */
export const DEMO_DEVICES_PER_LOT = 130;

export const DEMO_RIGS: Array<{
  code: string;
  name: string;
  location: string;
  socketCount: number;
  maxTempC: number;
  maxVoltageV: number;
  humidityCapable: boolean;
  maxHumidityPct: number | null;
  /** Chambers for the unbiased kinds (tc, htsl, ac): capacity in devices, a cold limit, a vessel rating. */
  kind?: RigKind;
  minTempC?: number | null;
  maxPressureKPa?: number | null;
}> = [
  {
    code: 'OV-01',
    name: 'Oven 1 · reverse-bias board',
    location: 'Bay A',
    socketCount: 64,
    maxTempC: 200,
    maxVoltageV: 800,
    humidityCapable: false,
    maxHumidityPct: null,
  },
  {
    code: 'OV-02',
    name: 'Oven 2 · reverse-bias board',
    location: 'Bay A',
    socketCount: 64,
    maxTempC: 200,
    maxVoltageV: 800,
    humidityCapable: false,
    maxHumidityPct: null,
  },
  {
    code: 'OV-03',
    name: 'Oven 3 · powered-life board',
    location: 'Bay B',
    socketCount: 48,
    maxTempC: 175,
    maxVoltageV: 100,
    humidityCapable: false,
    maxHumidityPct: null,
  },
  {
    code: 'OV-04',
    name: 'Oven 4 · powered-life board',
    location: 'Bay B',
    socketCount: 32,
    maxTempC: 175,
    maxVoltageV: 100,
    humidityCapable: false,
    maxHumidityPct: null,
  },
  {
    code: 'HC-05',
    name: 'Humidity chamber 5',
    location: 'Bay C',
    socketCount: 48,
    maxTempC: 130,
    maxVoltageV: 600,
    humidityCapable: true,
    maxHumidityPct: 95,
  },
  {
    code: 'OV-06',
    name: 'Oven 6 · cycling board',
    location: 'Bay C',
    socketCount: 32,
    maxTempC: 175,
    maxVoltageV: 60,
    humidityCapable: false,
    maxHumidityPct: null,
  },
  {
    code: 'CY-07',
    name: 'Cycling bench 7 · power on/off, TSP read-out',
    location: 'Bay C',
    socketCount: 16,
    maxTempC: 150,
    maxVoltageV: 60,
    humidityCapable: false,
    maxHumidityPct: null,
  },
  {
    // Air-to-air temperature cycling (JESD22-A104): trays for 160 devices, −70…+200 °C.
    code: 'TC-01',
    name: 'Cycling chamber 1 · air to air',
    location: 'Bay D',
    socketCount: 160,
    maxTempC: 200,
    maxVoltageV: 0,
    humidityCapable: false,
    maxHumidityPct: null,
    kind: 'chamber',
    minTempC: -70,
    maxPressureKPa: null,
  },
  {
    // Autoclave / unbiased HAST vessel (JESD22-A102 / A118) that also bakes dry for storage life.
    code: 'AC-01',
    name: 'Autoclave 1 · steam vessel',
    location: 'Bay D',
    socketCount: 120,
    maxTempC: 180,
    maxVoltageV: 0,
    humidityCapable: true,
    maxHumidityPct: 100,
    kind: 'chamber',
    minTempC: null,
    maxPressureKPa: 300,
  },
];

/** Demo rig MQTT secrets are predictable so the simulator can sign in; real rigs get random ones. */
export const demoRigSecret = (code: string) => `${code.toLowerCase()}-demo-secret`;
export const rigMqttUsername = (code: string) => `rig-${code.toLowerCase()}`;
