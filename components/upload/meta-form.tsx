import { StyleSheet, View } from 'react-native';
import { METHOD_LABELS, RESULT_METHODS, XSEC_UNITS, type Quantity, type XsecUnit } from '@/shared/schemas/results';
import { useIsWide } from '@/hooks/use-layout';
import { colors, space } from '@/themes/tokens';
import { ChoiceGroup } from '../ui/choice-group';
import type { FieldErrors } from '../ui/form';
import { Text } from '../ui/text';
import { TextField, type TextFieldProps } from '../ui/text-field';
import type { MetaDraft } from './upload-model';

export const META_FIELD_LABELS: Record<keyof MetaDraft | 'changeNote', string> = {
  title: 'Title',
  model: 'Physics model',
  parameterName: 'Parameter name',
  parameterUnit: 'Parameter unit',
  quantity: 'Limit on',
  quantityUnit: 'Cross-section unit',
  sqrtS: '√s (TeV)',
  luminosity: 'Integrated luminosity (fb⁻¹)',
  cl: 'Confidence level',
  method: 'Method',
  reference: 'Reference',
  notes: 'Notes',
  changeNote: 'What changed in this version',
};

type Props = {
  value: MetaDraft;
  onChange: (patch: Partial<MetaDraft>) => void;
  /** Errors to show beside fields (only those the user has touched). */
  errors: FieldErrors;
  onTouch: (field: keyof MetaDraft) => void;
};

/** Provenance and units of a version, checked beside each field with the shared schema. */
export function MetaForm({ value, onChange, errors, onTouch }: Props) {
  const wide = useIsWide();
  const field = (name: keyof MetaDraft, extra: Partial<TextFieldProps> = {}) => (
    <TextField
      label={META_FIELD_LABELS[name]}
      value={String(value[name])}
      onChangeText={(t) => onChange({ [name]: t } as Partial<MetaDraft>)}
      onBlur={() => onTouch(name)}
      error={errors[name]}
      {...extra}
    />
  );
  return (
    <View style={styles.form}>
      {field('title', { placeholder: 'e.g. Search for a heavy vector boson in dijet events' })}
      {field('model', { placeholder: 'e.g. Sequential Z′, g = 0.25' })}
      <View style={[styles.pair, wide && styles.pairWide]}>
        <View style={styles.grow}>{field('parameterName', { placeholder: 'e.g. m(Z′)' })}</View>
        <View style={styles.small}>{field('parameterUnit', { placeholder: 'e.g. TeV', autoCapitalize: 'none' })}</View>
      </View>
      <View style={styles.group}>
        <Text variant="label">{META_FIELD_LABELS.quantity}</Text>
        <ChoiceGroup<Quantity>
          label="Limit on"
          value={value.quantity}
          choices={[
            { value: 'xsec', label: 'σ×B (cross-section × branching)' },
            { value: 'mu', label: 'Signal strength μ' },
          ]}
          onChange={(q) => onChange(q === 'mu' ? { quantity: q, quantityUnit: '' } : { quantity: q, quantityUnit: value.quantityUnit || 'fb' })}
        />
      </View>
      {value.quantity === 'xsec' ? (
        <View style={styles.group}>
          <Text variant="label">{META_FIELD_LABELS.quantityUnit}</Text>
          <ChoiceGroup<XsecUnit>
            label="Cross-section unit"
            value={(value.quantityUnit || 'fb') as XsecUnit}
            choices={XSEC_UNITS.map((u) => ({ value: u, label: u }))}
            onChange={(u) => onChange({ quantityUnit: u })}
          />
          {errors.quantityUnit ? (
            <Text variant="caption" role="alert" style={styles.error}>
              {errors.quantityUnit}
            </Text>
          ) : null}
        </View>
      ) : null}
      <View style={[styles.pair, wide && styles.pairWide]}>
        <View style={styles.grow}>{field('sqrtS', { inputMode: 'decimal', placeholder: 'e.g. 18' })}</View>
        <View style={styles.grow}>{field('luminosity', { inputMode: 'decimal', placeholder: 'e.g. 140' })}</View>
      </View>
      <View style={wide ? styles.half : undefined}>{field('cl', { inputMode: 'decimal', hint: '0.95 for 95% CL' })}</View>
      <View style={styles.group}>
        <Text variant="label">{META_FIELD_LABELS.method}</Text>
        <ChoiceGroup
          label="Method"
          value={value.method}
          choices={RESULT_METHODS.map((m) => ({ value: m, label: METHOD_LABELS[m] }))}
          onChange={(m) => {
            onChange({ method: m });
            onTouch('method');
          }}
        />
        {errors.method ? (
          <Text variant="caption" role="alert" style={styles.error}>
            {errors.method}
          </Text>
        ) : null}
      </View>
      {field('reference', { placeholder: 'Paper or note id, e.g. LF-EXO-2026-04' })}
      {field('notes', { multiline: true, numberOfLines: 3 })}
    </View>
  );
}

const styles = StyleSheet.create({
  form: { gap: space.md },
  pair: { gap: space.md },
  pairWide: { flexDirection: 'row' },
  grow: { flex: 1, minWidth: 0 },
  small: { minWidth: 120 },
  half: { width: '50%', paddingRight: space.sm },
  group: { gap: space.xs },
  error: { color: colors.danger },
});
