import { cleanup, render, screen } from '@testing-library/react';
import { afterEach, describe, expect, it } from 'vitest';
import { SafetyNote } from './safety-note';

afterEach(cleanup);

describe('SafetyNote', () => {
  it('lists the usual cautions and defers to site procedures', () => {
    render(<SafetyNote />);
    const note = screen.getByRole('complementary', { name: 'Safety cautions' });
    const text = note.textContent ?? '';
    for (const words of ['Isolate and vent', 'hazardous', 'interlock bypass', 'overpressure']) expect(text).toContain(words);
    expect(text).toContain('Follow your site procedures, local codes and licensed practice; Stillpoint does not replace them.');
  });
});

describe('SafetyNote on return to service', () => {
  it('shows the return cautions open, not behind a disclosure, and still defers to site procedures', () => {
    render(<SafetyNote stage="return" />);
    const note = screen.getByRole('complementary', { name: 'Safety cautions' });
    expect(note.querySelector('details')).toBeNull();
    expect(note.textContent).toContain('Remove any interlock bypass');
    expect(note.textContent).toContain('Follow your site procedures, local codes and licensed practice');
  });
});
