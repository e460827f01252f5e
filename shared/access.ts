/**
 * Group roles and what each may do: the single table the server enforces (server/access.ts) and
 * the app reads to hide controls a role cannot use. The server is the authority.
 */
export const GROUP_ROLES = ['owner', 'curator', 'analyst', 'editor', 'viewer'] as const;
export type GroupRole = (typeof GROUP_ROLES)[number];

/** Higher rank includes everything a lower rank can do: owner > curator > analyst > editor > viewer. */
export const ROLE_RANK: Record<GroupRole, number> = { viewer: 0, editor: 1, analyst: 2, curator: 3, owner: 4 };

export const ROLE_LABELS: Record<GroupRole, string> = {
  owner: 'Owner',
  curator: 'Curator',
  analyst: 'Analyst',
  editor: 'Editor',
  viewer: 'Viewer',
};

export const ROLE_DESCRIPTIONS: Record<GroupRole, string> = {
  owner: 'Everything, plus members, roles, the storage plan and deleting the group',
  curator: 'Publish, supersede and retract results; manage members below owner',
  analyst: 'Upload or compute results as drafts; create and edit figures',
  editor: 'Create and edit figures from the group’s results; no uploads',
  viewer: 'Read results and figures, download exports',
};

/** Actions checked on every group route, with the lowest role allowed. */
export const ACTION_MIN_ROLE = {
  'group.read': 'viewer',
  'figure.write': 'editor',
  'result.write': 'analyst',
  'result.publish': 'curator',
  'member.manage': 'curator',
  'group.manage': 'owner',
  'billing.manage': 'owner',
} as const satisfies Record<string, GroupRole>;
export type GroupAction = keyof typeof ACTION_MIN_ROLE;

export function can(role: GroupRole | null | undefined, action: GroupAction): boolean {
  if (!role) return false;
  return ROLE_RANK[role] >= ROLE_RANK[ACTION_MIN_ROLE[action]];
}

/**
 * Roles `actor` may hand out or take away. Owners manage everyone; curators manage members below
 * owner and may grant at most curator.
 */
export function assignableRoles(actor: GroupRole): GroupRole[] {
  if (actor === 'owner') return [...GROUP_ROLES];
  if (actor === 'curator') return GROUP_ROLES.filter((r) => r !== 'owner');
  return [];
}
