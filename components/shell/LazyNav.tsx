/**
 * The navigation chrome, loaded on demand (nav-kit.ts). The chrome sits beside the page, never around it,
 * so the router's <Slot/> still mounts on the first render (ShellFrame); until the chunk is in (it starts
 * with the entry on signed-in pages) the chrome's place stays empty.
 * In the app's jest project this module maps to nav-kit.ts itself (jest runs no dynamic import()).
 */
import { lazy, Suspense, type ComponentProps, type ComponentType } from 'react';
import type * as Kit from './nav-kit';

const kit = () => import('./nav-kit');

function lazyPart<P extends object>(name: string, load: () => Promise<ComponentType<P>>) {
  const Lazy = lazy(() => load().then((component) => ({ default: component })));
  function LazyPart(props: P) {
    return (
      <Suspense fallback={null}>
        <Lazy {...props} />
      </Suspense>
    );
  }
  LazyPart.displayName = `Lazy(${name})`;
  return LazyPart;
}

export const SideRail = lazyPart<ComponentProps<typeof Kit.SideRail>>('SideRail', () => kit().then((m) => m.SideRail));
export const TabBar = lazyPart<ComponentProps<typeof Kit.TabBar>>('TabBar', () => kit().then((m) => m.TabBar));
export const MoreSheet = lazyPart<ComponentProps<typeof Kit.MoreSheet>>('MoreSheet', () => kit().then((m) => m.MoreSheet));
