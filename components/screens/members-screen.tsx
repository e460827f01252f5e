import { useRouter } from 'expo-router';
import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { assignableRoles, GROUP_ROLES, ROLE_DESCRIPTIONS, ROLE_LABELS, type GroupRole } from '@/shared/access';
import { inviteSchema, type Member } from '@/shared/schemas/groups';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useChangeRole, useInvitations, useInvite, useMembers, useRemoveMember, useRevokeInvitation } from '@/hooks/use-groups';
import { useIsWide } from '@/hooks/use-layout';
import { useMe } from '@/hooks/use-session';
import { colors, space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { ChoiceGroup } from '../ui/choice-group';
import { EmptyState } from '../ui/empty-state';
import { checkForm, errorMessage, serverFieldErrors, type FieldErrors } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';
import { formatDate } from '@/shared/dates';

const roleChoices = (allowed: GroupRole[]) => GROUP_ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r], disabled: !allowed.includes(r) }));

function MemberRow({ member, groupId, myRole, myId }: { member: Member; groupId: string; myRole: GroupRole; myId: string }) {
  const change = useChangeRole(groupId);
  const remove = useRemoveMember(groupId);
  const router = useRouter();
  const allowed = assignableRoles(myRole);
  const manageable = allowed.includes(member.role) && member.userId !== myId;
  const isMe = member.userId === myId;
  return (
    <Card>
      <View style={styles.memberHead}>
        <View style={styles.memberName}>
          <Text variant="label">
            {member.name}
            {isMe ? ' (you)' : ''}
          </Text>
          <Text variant="caption">{member.email}</Text>
        </View>
        <Text style={styles.roleBadge} aria-label={`Role: ${ROLE_LABELS[member.role]}`}>
          {ROLE_LABELS[member.role]}
        </Text>
      </View>
      {manageable ? (
        <>
          <ChoiceGroup
            label={`Role of ${member.name}`}
            value={member.role}
            choices={roleChoices(allowed)}
            onChange={(role) => role !== member.role && change.mutate({ userId: member.userId, role })}
          />
          <Button
            compact
            variant="ghost"
            label="Remove"
            accessibilityLabel={`Remove ${member.name} from the group`}
            loading={remove.isPending}
            onPress={() => remove.mutate(member.userId)}
            style={styles.alignStart}
          />
        </>
      ) : null}
      {isMe ? (
        <Button
          compact
          variant="ghost"
          label="Leave group"
          loading={remove.isPending}
          onPress={() => remove.mutate(member.userId, { onSuccess: () => router.replace('/') })}
          style={styles.alignStart}
        />
      ) : null}
      {change.error ? <Banner tone="error" message={errorMessage(change.error)!} /> : null}
      {remove.error ? <Banner tone="error" message={errorMessage(remove.error)!} /> : null}
    </Card>
  );
}

function InviteForm({ groupId, myRole }: { groupId: string; myRole: GroupRole }) {
  const invite = useInvite(groupId);
  const [email, setEmail] = useState('');
  const [role, setRole] = useState<GroupRole>('viewer');
  const [errors, setErrors] = useState<FieldErrors>({});
  const [sentTo, setSentTo] = useState<string | null>(null);
  const submit = () => {
    const { data, errors: e } = checkForm(inviteSchema, { email, role });
    setErrors(e);
    setSentTo(null);
    if (!data) return;
    invite.mutate(data, {
      onSuccess: () => {
        setSentTo(data.email);
        setEmail('');
      },
      onError: (err) => setErrors(serverFieldErrors(err)),
    });
  };
  return (
    <Card>
      <Text variant="title">Invite someone</Text>
      <TextField label="E-mail address to invite" value={email} onChangeText={setEmail} inputMode="email" autoCapitalize="none" error={errors.email} onSubmitEditing={submit} />
      <Text variant="label">Role</Text>
      <ChoiceGroup label="Role for the invitation" value={role} choices={roleChoices(assignableRoles(myRole))} onChange={setRole} />
      <Text variant="caption">{ROLE_DESCRIPTIONS[role]}</Text>
      {invite.error && !Object.keys(errors).length ? <Banner tone="error" message={errorMessage(invite.error)!} /> : null}
      {sentTo ? <Banner tone="success" message={`Invitation sent to ${sentTo}.`} /> : null}
      <Button label="Send invitation" onPress={submit} loading={invite.isPending} style={styles.alignStart} />
    </Card>
  );
}

function PendingInvitations({ groupId }: { groupId: string }) {
  const list = useInvitations(groupId, true);
  const revoke = useRevokeInvitation(groupId);
  const pending = (list.data ?? []).filter((i) => i.state === 'pending');
  if (list.isPending) return <Loading label="Loading invitations…" />;
  if (pending.length === 0) return null;
  return (
    <Card>
      <Text variant="title">Open invitations</Text>
      {pending.map((i) => (
        <View key={i.id} style={styles.inviteRow}>
          <View style={styles.memberName}>
            <Text>{i.email}</Text>
            <Text variant="caption">
              {ROLE_LABELS[i.role]} · expires {formatDate(i.expiresAt)}
            </Text>
          </View>
          <Button compact variant="secondary" label="Revoke" accessibilityLabel={`Revoke the invitation of ${i.email}`} onPress={() => revoke.mutate(i.id)} />
        </View>
      ))}
      {revoke.error ? <Banner tone="error" message={errorMessage(revoke.error)!} /> : null}
    </Card>
  );
}

export function MembersScreen() {
  const { group, can } = useCurrentGroup();
  const me = useMe();
  const members = useMembers(group?.id);
  const wide = useIsWide();
  const router = useRouter();
  if (!group) {
    return (
      <Screen title="Members">
        <EmptyState title="No group selected" message="Create a group or accept an invitation first." action={<Button label="Create a group" onPress={() => router.push('/groups/new')} />} />
      </Screen>
    );
  }
  const manage = can('member.manage');
  const list = (
    <View style={styles.column}>
      {members.isPending ? <Loading label="Loading members…" /> : null}
      {members.error ? <Banner tone="error" message={errorMessage(members.error)!} /> : null}
      {members.data?.map((m) => <MemberRow key={m.userId} member={m} groupId={group.id} myRole={group.role} myId={me.data?.user.id ?? ''} />)}
    </View>
  );
  return (
    <Screen title="Members" subtitle={`${group.name} · you are ${ROLE_LABELS[group.role].toLowerCase()}`}>
      {manage ? (
        <View style={wide ? styles.row : styles.column}>
          <View style={wide ? styles.mainPane : undefined}>{list}</View>
          <View style={[styles.column, wide && styles.sidePane]}>
            <InviteForm groupId={group.id} myRole={group.role} />
            <PendingInvitations groupId={group.id} />
          </View>
        </View>
      ) : (
        list
      )}
    </Screen>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' },
  column: { gap: space.md },
  mainPane: { flex: 3 },
  sidePane: { flex: 2 },
  memberHead: { flexDirection: 'row', alignItems: 'center', gap: space.md },
  memberName: { flex: 1, minWidth: 0 },
  roleBadge: { backgroundColor: colors.surfaceAlt, paddingHorizontal: space.sm, paddingVertical: 2, borderRadius: 6, fontSize: 13 },
  inviteRow: { flexDirection: 'row', alignItems: 'center', gap: space.md },
  alignStart: { alignSelf: 'flex-start' },
});
