/**
 * Lexend on native: the core file of each weight from the bundle through expo-font (other characters
 * fall back to the system face). The web has its own file (use-lexend.web.ts), so expo-font and its
 * font observer stay out of the web's first load (tests/unit/web-budget.test.ts).
 */
import { useFonts } from 'expo-font';
import Lexend_400Regular from '@/assets/fonts/Lexend_400Regular.woff2';
import Lexend_500Medium from '@/assets/fonts/Lexend_500Medium.woff2';
import Lexend_600SemiBold from '@/assets/fonts/Lexend_600SemiBold.woff2';

const LEXEND = { Lexend_400Regular, Lexend_500Medium, Lexend_600SemiBold };

/** [loaded, error] like expo-font's useFonts. */
export const useLexend = (): [boolean, Error | null] => useFonts(LEXEND);
