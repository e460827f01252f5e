import type { Href } from 'expo-router';

export type NavItem = { href: Href; path: string; label: string; icon: string; devOnly?: boolean; /** Other pages that belong to this section. */ also?: RegExp };

/** The app's main sections, shared by the side navigation and the bottom tabs. */
export const NAV_ITEMS: NavItem[] = [
  { href: '/', path: '/', label: 'Results', icon: '▤', also: /^\/(results\/|groups\/[^/]+\/results\/)/ },
  { href: '/compute', path: '/compute', label: 'Compute', icon: '∑', also: /^\/groups\/[^/]+\/scans\// },
  { href: '/figures', path: '/figures', label: 'Figures', icon: '◩', also: /^\/groups\/[^/]+\/figures\// },
  { href: '/members', path: '/members', label: 'Members', icon: '◉' },
  { href: '/inbox', path: '/inbox', label: 'Inbox (development)', icon: '✉', devOnly: true },
  { href: '/account', path: '/account', label: 'Account', icon: '☺', also: /^\/(tokens|plan)$/ },
];

export function isActive(item: NavItem, pathname: string): boolean {
  if (item.also?.test(pathname)) return true;
  return item.path === '/' ? pathname === '/' : pathname.startsWith(item.path);
}
