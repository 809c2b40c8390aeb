/**
 * Drag to pan and pinch to zoom on the schedule's track, from the browser's pointer events (mouse,
 * pen and touch alike). React Native Web's responder system did not hand a mouse drag to the track
 * (a press on a bar kept it), so this listens on the track's DOM node directly; on a platform
 * without one it does nothing and the buttons remain.
 */
import { useEffect, useRef } from 'react';

export interface TrackGestures {
  /** While dragging: pixels moved since the drag began (positive = right). */
  onDrag: (dx: number) => void;
  /** At the end of a drag: the whole distance. */
  onDragEnd: (dx: number) => void;
  /** Two pointers moved apart (−1: zoom in) or together (+1: zoom out) by about a third. */
  onPinch: (step: 1 | -1) => void;
}

/** Movement below this is a tap (a bar still opens its run). */
const DRAG_SLOP_PX = 8;

type PointerTarget = {
  addEventListener: (type: string, fn: (e: never) => void, capture?: boolean) => void;
  removeEventListener: (type: string, fn: (e: never) => void, capture?: boolean) => void;
  style?: { touchAction?: string };
};
type Pointer = { pointerId: number; clientX: number; clientY: number; preventDefault: () => void };

const isPointerTarget = (x: unknown): x is PointerTarget =>
  !!x && typeof (x as { addEventListener?: unknown }).addEventListener === 'function';

export function useTrackGestures(node: unknown, gestures: TrackGestures): void {
  const g = useRef(gestures);
  g.current = gestures;
  useEffect(() => {
    const win: unknown = globalThis.window;
    if (!isPointerTarget(node) || !isPointerTarget(win)) return;
    const pts = new Map<number, { x: number; y: number }>();
    let startX = 0;
    let dragging = false;
    let moved = false;
    let gap0: number | null = null;
    const down = (e: Pointer) => {
      pts.set(e.pointerId, { x: e.clientX, y: e.clientY });
      if (pts.size === 1) {
        startX = e.clientX;
        dragging = true;
        moved = false;
      } else {
        dragging = false;
        g.current.onDrag(0);
      }
    };
    const move = (e: Pointer) => {
      if (!pts.has(e.pointerId)) return;
      pts.set(e.pointerId, { x: e.clientX, y: e.clientY });
      if (pts.size >= 2) {
        const [a, b] = [...pts.values()];
        const gap = Math.hypot(a.x - b.x, a.y - b.y);
        if (gap0 === null) gap0 = gap;
        else if (gap / gap0 > 1.3 || gap / gap0 < 0.77) {
          g.current.onPinch(gap > gap0 ? -1 : 1);
          gap0 = gap;
        }
        return;
      }
      if (!dragging) return;
      const dx = e.clientX - startX;
      if (Math.abs(dx) > DRAG_SLOP_PX) moved = true;
      if (moved) {
        e.preventDefault();
        g.current.onDrag(dx);
      }
    };
    const up = (e: Pointer) => {
      if (!pts.delete(e.pointerId)) return;
      if (pts.size < 2) gap0 = null;
      if (dragging && pts.size === 0) {
        dragging = false;
        if (moved) g.current.onDragEnd(e.clientX - startX);
      }
    };
    // A drag that ended on a bar must not open it.
    const click = (e: { stopPropagation: () => void; preventDefault: () => void }) => {
      if (!moved) return;
      moved = false;
      e.stopPropagation();
      e.preventDefault();
    };
    if (node.style) node.style.touchAction = 'pan-y';
    node.addEventListener('pointerdown', down);
    node.addEventListener('click', click, true);
    win.addEventListener('pointermove', move);
    win.addEventListener('pointerup', up);
    win.addEventListener('pointercancel', up);
    return () => {
      node.removeEventListener('pointerdown', down);
      node.removeEventListener('click', click, true);
      win.removeEventListener('pointermove', move);
      win.removeEventListener('pointerup', up);
      win.removeEventListener('pointercancel', up);
    };
  }, [node]);
}
