import { useRouter } from 'expo-router';
import { useState } from 'react';
import { createGroupSchema } from '@/shared/schemas/groups';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useCreateGroup } from '@/hooks/use-groups';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { checkForm, errorMessage, serverFieldErrors, type FieldErrors } from '../ui/form';
import { Screen } from '../ui/screen';
import { TextField } from '../ui/text-field';

export function CreateGroupScreen() {
  const router = useRouter();
  const create = useCreateGroup();
  const { select } = useCurrentGroup();
  const [name, setName] = useState('');
  const [description, setDescription] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});

  const submit = () => {
    const { data, errors: e } = checkForm(createGroupSchema, { name, description });
    setErrors(e);
    if (!data) return;
    create.mutate(data, {
      onSuccess: (g) => {
        select(g.id);
        router.replace('/members');
      },
      onError: (err) => setErrors(serverFieldErrors(err)),
    });
  };

  return (
    <Screen title="Create a group" subtitle="You become its owner and can invite others.">
      <Card>
        {create.error && !Object.keys(errors).length ? <Banner tone="error" message={errorMessage(create.error)!} /> : null}
        <TextField label="Group name" value={name} onChangeText={setName} error={errors.name} placeholder="e.g. Dijet resonance team" />
        <TextField label="Description (optional)" value={description} onChangeText={setDescription} error={errors.description} multiline numberOfLines={3} />
        <Button label="Create group" onPress={submit} loading={create.isPending} />
      </Card>
    </Screen>
  );
}
