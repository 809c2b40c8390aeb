/**
 * An unbiased chamber run (temperature cycling, storage, autoclave): the cycles counted from the
 * load temperature against the target and the next read point in cycles (tc), the profile, and the
 * chamber's latest report (air and load). Rules: shared/chamber/profile.ts, server/modules/runs/chamber-engine.ts.
 */
import { View } from 'react-native';
import { space } from '@/components/theme/tokens';
import { Card } from '@/components/ui/Card';
import { Fact } from '@/components/ui/Fact';
import { grouped } from '@/shared/domain/format';
import type { RunChamberCycles, RunChamberView } from '@/shared/schemas/runs';

const c1 = (x: number) => `${+x.toFixed(1)} °C`;
const PHASE_TEXT: Record<NonNullable<RunChamberCycles['phase']>, string> = {
  'to-hot': 'Heading to the hot extreme',
  hot: 'Dwelling at the hot extreme',
  'to-cold': 'Heading to the cold extreme',
  cold: 'Dwelling at the cold extreme',
};

export function RunChamberCard({ cycles, chamber }: { cycles: RunChamberCycles | null; chamber: RunChamberView | null }) {
  const latest = chamber?.latest ?? null;
  return (
    <Card
      title={cycles ? 'Temperature cycling' : 'Chamber'}
      description="Unbiased devices in a chamber: the load temperature (a probe among the devices) is the stress. A software alarm is no substitute for the chamber’s own protection."
    >
      {cycles ? (
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
          <Fact label="Cycles counted" value={`${grouped(cycles.done)} of ${grouped(cycles.target)}`} testID="run-chamber-cycles" />
          <Fact
            label="Next read point"
            value={cycles.nextReadPointCycles === null ? 'None left' : `${grouped(cycles.nextReadPointCycles)} cycles`}
          />
          <Fact
            label="Profile"
            value={`${c1(cycles.lowC)} / ${c1(cycles.highC)}, ${cycles.dwellMin} min dwell, ${cycles.rampKPerMin} K/min (${+cycles.periodMin.toFixed(1)} min a cycle)`}
          />
          <Fact label="Now" value={cycles.phase ? PHASE_TEXT[cycles.phase] : '—'} />
          {cycles.excursions ? <Fact label="Excursions" value={grouped(cycles.excursions)} /> : null}
        </View>
      ) : null}
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
        <Fact label="Air" value={latest ? c1(latest.airC) : 'No report yet'} testID="run-chamber-air" />
        <Fact label="Load" value={latest ? c1(latest.loadC) : '—'} testID="run-chamber-load" />
        {latest?.humidityPct != null ? <Fact label="Humidity" value={`${+latest.humidityPct.toFixed(1)} % RH`} /> : null}
        {latest?.pressureKPa != null ? <Fact label="Vessel pressure" value={`${+latest.pressureKPa.toFixed(0)} kPa`} /> : null}
      </View>
    </Card>
  );
}
