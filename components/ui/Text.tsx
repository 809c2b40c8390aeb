import { Text as RNText, type TextProps, type TextStyle } from 'react-native';
import { colors, tones, type, type Tone, type TypeVariant } from '@/components/theme/tokens';

export type TextTone = 'default' | 'muted' | 'subtle' | 'inverse' | 'ember' | Tone;

const toneColor = (t: TextTone): string => {
  switch (t) {
    case 'default':
      return colors.ink;
    case 'muted':
      return colors.inkMuted;
    case 'subtle':
      return colors.inkSubtle;
    case 'inverse':
      return colors.inkInverse;
    case 'ember':
      return colors.ember;
    default:
      return tones[t].fg;
  }
};

export interface Props extends TextProps {
  variant?: TypeVariant;
  tone?: TextTone;
  align?: TextStyle['textAlign'];
  /** Marks the text as a heading of this level (h1…h4 on web). */
  heading?: 1 | 2 | 3 | 4;
}

export function Text({ variant = 'body', tone = 'default', align, heading, style, ...rest }: Props) {
  const headingProps = heading ? { role: 'heading' as const, 'aria-level': heading } : {};
  return (
    <RNText {...headingProps} {...rest} style={[type[variant], { color: toneColor(tone) }, align ? { textAlign: align } : null, style]} />
  );
}
