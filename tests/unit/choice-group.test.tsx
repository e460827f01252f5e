import { fireEvent, render, screen } from '@testing-library/react-native';
import { ChoiceGroup } from '@/components/ui/choice-group';

test('a role chip reports its value; a disabled chip does nothing; the selected one is checked', () => {
  const onChange = jest.fn();
  render(
    <ChoiceGroup
      label="Role"
      value="viewer"
      onChange={onChange}
      choices={[
        { value: 'owner', label: 'Owner', disabled: true },
        { value: 'analyst', label: 'Analyst' },
        { value: 'viewer', label: 'Viewer' },
      ]}
    />,
  );
  fireEvent.press(screen.getByLabelText('Analyst'));
  expect(onChange).toHaveBeenCalledWith('analyst');
  fireEvent.press(screen.getByLabelText('Owner'));
  expect(onChange).toHaveBeenCalledTimes(1);
  expect(screen.getByRole('radio', { name: 'Viewer', checked: true })).toBeTruthy();
  expect(screen.queryByRole('radio', { name: 'Analyst', checked: true })).toBeNull();
});
