import { describe, expect, it } from 'vitest';
import { decisionAdvice } from './decision-text';

describe('decisionAdvice', () => {
  it('asks for the as-left pass only while there is none', () => {
    expect(decisionAdvice('fail', undefined)).toMatch(/then run the as-left pass/);
    expect(decisionAdvice('pass', undefined)).toMatch(/no adjustment is needed/);
  });

  it('stops asking for the as-left pass once it has passed', () => {
    for (const found of ['fail', 'conditional-fail', 'pass']) {
      const text = decisionAdvice(found, 'pass');
      expect(text).not.toMatch(/run the as-left pass/);
      expect(text).toMatch(/as-left pass is (done|in tolerance)/);
    }
  });

  it('says what to do when the as-left pass is still out of tolerance', () => {
    expect(decisionAdvice('fail', 'fail')).toMatch(/trim again and repeat the as-left run/);
  });
});
