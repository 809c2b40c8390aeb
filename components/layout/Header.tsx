import type { ReactNode } from 'react';
import { View } from 'react-native';
import { Text } from '@/components/ui/Text';
import { space } from '@/components/theme/tokens';
import { useBreakpoints } from '@/components/theme/breakpoints';

interface Props {
  title: string;
  /** One sentence on what this screen is for. */
  subtitle?: string;
  /** Small line above the title, e.g. the lab or the lot code. */
  eyebrow?: string;
  /** Buttons; beside the title from tablet width, below it on a phone. */
  actions?: ReactNode;
}

export function Header({ title, subtitle, eyebrow, actions }: Props) {
  const { gtPhone } = useBreakpoints();
  return (
    <View
      style={{
        flexDirection: gtPhone ? 'row' : 'column',
        alignItems: gtPhone ? 'flex-end' : 'stretch',
        justifyContent: 'space-between',
        gap: space.md,
      }}
    >
      <View style={{ flexShrink: 1, gap: space.xxs }}>
        {eyebrow ? (
          <Text variant="overline" tone="subtle">
            {eyebrow}
          </Text>
        ) : null}
        <Text variant={gtPhone ? 'display' : 'title'} heading={1}>
          {title}
        </Text>
        {subtitle ? (
          <Text variant="body" tone="muted" style={{ maxWidth: 640 }}>
            {subtitle}
          </Text>
        ) : null}
      </View>
      {actions ? <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>{actions}</View> : null}
    </View>
  );
}
