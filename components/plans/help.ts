import { DEFAULT_DURATION_H, DEFAULT_READ_POINTS_H, MEASURE_WITHIN_H } from '@/shared/domain/standards';

export const PLAN_HELP = {
  chamberC:
    'Stress temperature: the minimum the chamber must hold (the rating itself for HTRB). The rig aims at the middle of the band; ' +
    'hours outside the band do not count. Hot ovens: follow the lab’s safety rules before opening one.',
  chamberBand:
    'Band in kelvin below and above the stress temperature where hours count; leave both empty for the method’s band (from memory — confirm against the method you follow).',
  humidityPct: 'Relative humidity for a humidity stress (85 % for THB).',
  vcbV: 'Collector-base reverse voltage on every device (magnitude; PNP parts are biased the other way by the board).',
  vebV: 'Emitter-base reverse voltage, if the board applies one. Leave empty for an open or shorted emitter. Never above BVEBO.',
  vceV: 'Collector-emitter voltage while powered. Keep it within the derated BVCEO, which is far below BVCBO.',
  biasMode:
    'Regulating IC holds the current whatever the gain does. Forcing IB lets the current rise as the part heats and its gain rises — ' +
    'the loop that can run away thermally; the plan check shows the margin.',
  tolerancePct: 'Bias band for counting hours: time when a socket is outside ± this band of its set value does not count.',
  durationH: `Total stress hours (${DEFAULT_DURATION_H} h is the usual qualification length).`,
  readPointsH: `Hours at which the parts come off stress to be measured, e.g. ${DEFAULT_READ_POINTS_H.join(', ')} (common practice). Measure within ${MEASURE_WITHIN_H} h of removing bias.`,
  sampleSize:
    'Devices per lot on stress. 77 per lot with 0 failures is the AEC-Q101 qualification sample; 45/0 the MIL-PRF-19500 life sample.',
  acceptNumber:
    'How many failures the lot may have and still pass. With 77 devices and accept 0, the lot demonstrates LTPD about 3 % at 90 % confidence.',
  criteria:
    'A device fails at a read point when a parameter moves beyond these limits from its own time-zero value (MIL-PRF-19500 delta limits: hFE ±15 %, ' +
    'ICBO up to 2× or 200 nA, whichever is greater, VCE(sat) 50 mV).',
  eaEv: 'Activation energy for the Arrhenius acceleration from stress to use temperature. 0.7 eV is the usual default when the mechanism is unknown.',
  useC: 'The temperature the parts see in use; acceleration factors and FIT are quoted for it.',
  breakdownDerating: 'The check refuses bias above this share of each breakdown rating (80 % is usual).',
  cycle: 'On-time equal to off-time. ΔTj ≥ 100 °C for 15,000 cycles, or ≥ 125 °C for 7,500 (MIL-STD-750 method 1037).',
} as const;
