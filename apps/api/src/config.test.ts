import { mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { loadConfig } from './config.js';

const folders: string[] = [];
const dataFolder = () => {
  const dir = mkdtempSync(path.join(tmpdir(), 'evenhand-data-'));
  folders.push(dir);
  return dir;
};
afterAll(() => folders.forEach((dir) => rmSync(dir, { recursive: true, force: true })));

describe('the session signing secret', () => {
  it('when JWT_SECRET is unset outside production, then a random secret is made once per data folder, readable by its owner only', () => {
    const dir = dataFolder();
    const first = loadConfig({ NODE_ENV: 'development', DATA_DIR: dir }).jwtSecret;
    expect(first).toMatch(/^[A-Za-z0-9_-]{43,}$/);
    const file = path.join(dir, 'jwt-secret');
    expect(readFileSync(file, 'utf8').trim()).toBe(first);
    expect(statSync(file).mode & 0o777).toBe(0o600);
    // The same folder keeps its secret across restarts; another folder gets its own.
    expect(loadConfig({ NODE_ENV: 'development', DATA_DIR: dir }).jwtSecret).toBe(first);
    expect(loadConfig({ NODE_ENV: 'test', DATA_DIR: dataFolder() }).jwtSecret).not.toBe(first);
  });

  it('when JWT_SECRET is set, then it is used and no file is written', () => {
    const dir = dataFolder();
    const secret = 'a-development-secret-of-at-least-32-characters';
    expect(loadConfig({ NODE_ENV: 'development', DATA_DIR: dir, JWT_SECRET: secret }).jwtSecret).toBe(secret);
    expect(() => statSync(path.join(dir, 'jwt-secret'))).toThrow();
  });

  it('refuses to start in production without JWT_SECRET', () => {
    expect(() => loadConfig({ NODE_ENV: 'production', DATA_DIR: dataFolder() })).toThrow(/JWT_SECRET \(32\+ characters\) is required in production/);
  });
});
