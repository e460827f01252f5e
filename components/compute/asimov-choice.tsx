import type { AsimovChoice as Asimov } from '@/shared/schemas/counting-model';
import { ChoiceGroup } from '../ui/choice-group';
import { Text } from '../ui/text';

/** Which Asimov dataset the expected limits use (the engine's `asimov` option). */
export function AsimovChoice({ value, onChange }: { value: Asimov; onChange: (v: Asimov) => void }) {
  return (
    <>
      <Text variant="label">Asimov dataset for the expected limits</Text>
      <ChoiceGroup<Asimov>
        label="Asimov dataset"
        value={value}
        onChange={onChange}
        choices={[
          { value: 'profiled', label: 'Nuisance parameters fitted to the data' },
          { value: 'nominal', label: 'Nominal nuisance parameters' },
        ]}
      />
    </>
  );
}
