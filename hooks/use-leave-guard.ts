import { useEffect } from 'react';

/**
 * Unsaved work that would be lost by leaving the screen. A screen with unsaved edits turns the
 * guard on; the browser asks before the tab is closed or reloaded, and the app's own navigation
 * (the main menu, the group switcher) asks through `confirmLeave` before it navigates.
 */
let guard: string | null = null;

/** True when nothing is unsaved, or the user agrees to leave it. */
export function confirmLeave(): boolean {
  if (!guard) return true;
  if (typeof window === 'undefined' || typeof window.confirm !== 'function') return true;
  const ok = window.confirm(guard);
  if (ok) guard = null;
  return ok;
}

/** While `message` is not null, leaving asks first with it. */
export function useLeaveGuard(message: string | null) {
  useEffect(() => {
    if (!message) return;
    guard = message;
    const onUnload = (e: BeforeUnloadEvent) => {
      e.preventDefault();
      // Older browsers show the dialog only when returnValue is set.
      e.returnValue = '';
    };
    if (typeof window !== 'undefined') window.addEventListener('beforeunload', onUnload);
    return () => {
      if (guard === message) guard = null;
      if (typeof window !== 'undefined') window.removeEventListener('beforeunload', onUnload);
    };
  }, [message]);
}
