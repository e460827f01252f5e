import { createContext, useCallback, useContext, useMemo, useState, type ReactNode } from 'react';
import { Platform } from 'react-native';
import { can, ROLE_RANK, type GroupAction } from '@/shared/access';
import type { Group } from '@/shared/schemas/groups';
import { useMe } from './use-session';

const STORAGE_KEY = 'bandwright.currentGroup';

function readStored(): string | null {
  if (Platform.OS !== 'web' || typeof localStorage === 'undefined') return null;
  try {
    return localStorage.getItem(STORAGE_KEY);
  } catch {
    return null;
  }
}

type CurrentGroup = {
  group: Group | undefined;
  groups: Group[];
  select: (groupId: string) => void;
  /** What the current role allows (hides controls; the server still decides). */
  can: (action: GroupAction) => boolean;
};

const Ctx = createContext<CurrentGroup | null>(null);

/** Keeps the group the user is working in, remembered across visits on the web. */
export function CurrentGroupProvider({ children }: { children: ReactNode }) {
  const me = useMe();
  const [selected, setSelected] = useState<string | null>(readStored);
  const groups = useMemo(() => me.data?.groups ?? [], [me.data]);
  // Without a remembered choice, start in the group where the user can do the most.
  const group = groups.find((g) => g.id === selected) ?? [...groups].sort((a, b) => ROLE_RANK[b.role] - ROLE_RANK[a.role])[0];
  const select = useCallback((id: string) => {
    setSelected(id);
    if (Platform.OS === 'web' && typeof localStorage !== 'undefined') {
      try {
        localStorage.setItem(STORAGE_KEY, id);
      } catch {
        /* private mode: selection lasts for the visit */
      }
    }
  }, []);
  const value = useMemo<CurrentGroup>(
    () => ({ group, groups, select, can: (action) => can(group?.role, action) }),
    [group, groups, select],
  );
  return <Ctx.Provider value={value}>{children}</Ctx.Provider>;
}

export function useCurrentGroup(): CurrentGroup {
  const v = useContext(Ctx);
  if (!v) throw new Error('useCurrentGroup needs CurrentGroupProvider');
  return v;
}
