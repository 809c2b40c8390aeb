/**
 * Waits for the app project on a loaded 2-core CI machine (jest's two workers beside PostgreSQL and
 * Redis) with a fresh clone's empty transform cache:
 * - A test's first render requires React Native's components lazily, so jest transforms them inside
 *   that test: on a cold cache under load the first test of capacity.test.tsx took 61–75 s against
 *   the 30 s test timeout (warm: 2.5 s). Tests here get 120 s.
 * - findBy* and waitFor wait up to 10 s (Testing Library's default is 1 s) for what they look for.
 * Longer waits change no assertion: they only end later when a screen never gets there.
 */
import { configure } from '@testing-library/react-native';

configure({ asyncUtilTimeout: 10_000 });
jest.setTimeout(120_000);
