import type { ReactNode } from 'react';
import { View } from 'react-native';
import { radius, space, tones, type Tone } from '@/components/theme/tokens';
import { StatusShape } from './StatusShape';
import { Text } from './Text';

export type BannerTone = 'info' | 'warn' | 'danger' | 'ok';
const toTone: Record<BannerTone, Tone> = { info: 'info', warn: 'attention', danger: 'danger', ok: 'ok' };

interface Props {
  tone?: BannerTone;
  title?: string;
  children?: ReactNode;
  /** A button or link at the end of the banner. */
  action?: ReactNode;
  testID?: string;
}

/** A message across the content width. warn/danger are announced to screen readers. */
export function Banner({ tone = 'info', title, children, action, testID }: Props) {
  const t = tones[toTone[tone]];
  const urgent = tone === 'warn' || tone === 'danger';
  return (
    <View
      testID={testID}
      accessibilityRole={urgent ? 'alert' : undefined}
      accessibilityLiveRegion={urgent ? 'assertive' : 'polite'}
      style={{
        flexDirection: 'row',
        gap: space.sm,
        padding: space.md,
        borderRadius: radius.md,
        backgroundColor: t.bg,
        borderWidth: 1,
        borderColor: t.edge,
        borderLeftWidth: 4,
        borderLeftColor: t.fg,
      }}
    >
      <View style={{ paddingTop: 3 }}>
        <StatusShape tone={toTone[tone]} size={18} />
      </View>
      <View style={{ flex: 1, gap: space.xxs }}>
        {title ? (
          <Text variant="bodyStrong" style={{ color: t.fg }}>
            {title}
          </Text>
        ) : null}
        {typeof children === 'string' ? <Text variant="body">{children}</Text> : children}
        {action ? <View style={{ marginTop: space.xs, alignItems: 'flex-start' }}>{action}</View> : null}
      </View>
    </View>
  );
}
