/**
 * The bcrypt cost factor of new password hashes: 11 unless PASSWORD_HASH_COST says otherwise, never
 * below 10 in production (OWASP Password Storage Cheat Sheet, bcrypt work factor of at least 10),
 * and a stored hash verifies whatever cost the server now uses (the cost is part of the hash).
 */
import bcrypt from 'bcryptjs';
import { describe, expect, it } from 'vitest';
import { parseEnv } from '../env';
import { DEFAULT_HASH_COST, hashPassword, MIN_PRODUCTION_HASH_COST } from './auth.service';

describe('password hash cost', () => {
  it('defaults to 11 and takes the cost it is given', async () => {
    expect(DEFAULT_HASH_COST).toBeGreaterThanOrEqual(MIN_PRODUCTION_HASH_COST);
    expect(bcrypt.getRounds(await hashPassword('correct horse battery'))).toBe(11);
    const cheap = await hashPassword('correct horse battery', 4);
    expect(bcrypt.getRounds(cheap)).toBe(4);
    expect(await bcrypt.compare('correct horse battery', cheap)).toBe(true);
  });

  it('refuses less than 10 in production, and anything outside 4–15', () => {
    expect(() => parseEnv({ NODE_ENV: 'production', PASSWORD_HASH_COST: '9' })).toThrow(/PASSWORD_HASH_COST must be at least 10 in production/);
    expect(parseEnv({ NODE_ENV: 'production', PASSWORD_HASH_COST: '10' }).PASSWORD_HASH_COST).toBe(10);
    expect(parseEnv({ NODE_ENV: 'production' }).PASSWORD_HASH_COST).toBeUndefined();
    expect(parseEnv({ NODE_ENV: 'test', PASSWORD_HASH_COST: '4' }).PASSWORD_HASH_COST).toBe(4);
    expect(() => parseEnv({ NODE_ENV: 'test', PASSWORD_HASH_COST: '3' })).toThrow(/PASSWORD_HASH_COST/);
    expect(() => parseEnv({ NODE_ENV: 'development', PASSWORD_HASH_COST: '16' })).toThrow(/PASSWORD_HASH_COST/);
  });
});
