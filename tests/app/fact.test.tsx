import { render, screen } from '@testing-library/react-native';
import { Fact } from '@/components/ui/Fact';

describe('Fact (one labelled figure on a card)', () => {
  it('shows the label over the value and puts the testID on the value', () => {
    render(<Fact label="Cycles counted" value="1,204 of 3,000" testID="the-figure" />);
    expect(screen.getByTestId('the-figure')).toHaveTextContent('1,204 of 3,000', { exact: true });
    expect(screen.queryByText('Cycles counted')).toBeOnTheScreen();
  });

  it('renders without a testID (the run page’s plain facts)', () => {
    render(<Fact label="Rig" value="OV-04" />);
    expect(screen.queryByText('OV-04')).toBeOnTheScreen();
    expect(screen.queryByTestId('the-figure')).toBeNull();
  });
});
