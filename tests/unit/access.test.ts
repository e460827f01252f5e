import { ACTION_MIN_ROLE, assignableRoles, can, GROUP_ROLES, type GroupRole } from '@/shared/access';

// The product's role table (who may do what: owners everything, curators all but managing the group
// and its billing, analysts results and figures, editors figures, viewers reading), written out by
// hand so a change to shared/access.ts that contradicts it fails here.
const EXPECTED: Record<GroupRole, string[]> = {
  owner: ['group.read', 'figure.write', 'result.write', 'result.publish', 'member.manage', 'group.manage', 'billing.manage'],
  curator: ['group.read', 'figure.write', 'result.write', 'result.publish', 'member.manage'],
  analyst: ['group.read', 'figure.write', 'result.write'],
  editor: ['group.read', 'figure.write'],
  viewer: ['group.read'],
};

test.each(GROUP_ROLES)('%s may do exactly what the role table says', (role) => {
  const allowed = Object.keys(ACTION_MIN_ROLE).filter((a) => can(role, a as keyof typeof ACTION_MIN_ROLE));
  expect(allowed.sort()).toEqual([...EXPECTED[role]].sort());
});

test('no role means no action', () => {
  expect(can(undefined, 'group.read')).toBe(false);
  expect(can(null, 'group.read')).toBe(false);
});

test('owners hand out every role, curators all but owner, others none', () => {
  expect(assignableRoles('owner')).toEqual(['owner', 'curator', 'analyst', 'editor', 'viewer']);
  expect(assignableRoles('curator')).toEqual(['curator', 'analyst', 'editor', 'viewer']);
  for (const r of ['analyst', 'editor', 'viewer'] as const) expect(assignableRoles(r)).toEqual([]);
});
