/** A stand-in for expo-router in screen tests: navigation calls are recorded, links render their child. */
import type { ReactNode } from 'react';
import { Text } from 'react-native';

export const router = { replace: jest.fn(), push: jest.fn(), navigate: jest.fn(), back: jest.fn() };
export const usePathname = jest.fn(() => '/');
export const useLocalSearchParams = jest.fn(() => ({}));
export const Link = ({ children }: { children: ReactNode }) => <>{children}</>;
export const Redirect = ({ href }: { href: string }) => <Text testID="redirect">{`Redirect to ${href}`}</Text>;
export const Slot = () => <Text>Page content</Text>;
export const Stack = () => null;
export const useRouter = () => router;
