import { cleanup, render, screen } from '@testing-library/react';
import { afterEach, describe, expect, it } from 'vitest';
import { ne43Problem } from '../lib/live-values';
import { WarningBanner } from './warning-banner';

afterEach(cleanup);

describe('WarningBanner', () => {
  it('names each warning in words, as an alert, with the leak rate and the action', () => {
    render(
      <WarningBanner
        items={[
          { kind: 'leak', message: 'Applied DP falling while isolated', rate: -0.42, action: 'Check the fittings' },
          { kind: 'overshoot', message: 'Passed the target on the way up', action: 'Re-approach from below' },
          { kind: 'disconnect', message: 'Current meter on /dev/ttyUSB1: cable pulled' },
        ]}
      />,
    );
    const alerts = screen.getAllByRole('alert');
    expect(alerts).toHaveLength(3);
    expect(alerts[0]!.textContent).toContain('Leak');
    expect(screen.getByTestId('leak-rate').textContent).toBe('0.42');
    expect(alerts[0]!.textContent).toContain('% of span per minute');
    expect(alerts[0]!.textContent).toContain('Check the fittings');
    expect(alerts[1]!.textContent).toContain('Re-approach from below');
    expect(screen.getByTestId('warning-disconnect').textContent).toContain('Device disconnected');
  });

  it('renders nothing without warnings', () => {
    const { container } = render(<WarningBanner items={[]} />);
    expect(container.textContent).toBe('');
  });

  it('words NE 43 currents outside the measurement range and stays quiet inside it', () => {
    expect(ne43Problem('failure-low')).toMatch(/3\.6 mA/);
    expect(ne43Problem('undefined-high')).toMatch(/3\.8–20\.5 mA/);
    expect(ne43Problem('measurement')).toBeNull();
    expect(ne43Problem('saturation-high')).toBeNull();
  });
});
