import { describe, expect, it } from 'vitest';
import { NO_RESTART_ENV, POOL_MALLOC_TUNABLES, POOL_V8_FLAG, poolEnvironment, wantsPoolRestart } from '../../src/launch.js';

const argv = (...args: string[]) => ['node', 'subgauge', ...args];

describe('wantsPoolRestart: which runs get the pool process settings', () => {
  it('restarts audit and demo runs with two or more worker threads', () => {
    expect(wantsPoolRestart(argv('audit', 'night', '--jobs', '2'), [], {})).toBe(true);
    expect(wantsPoolRestart(argv('audit', '--jobs=4', 'night'), [], {})).toBe(true);
    expect(wantsPoolRestart(argv('--no-color', 'demo', '--jobs', '3'), [], {})).toBe(true);
  });

  it('leaves one-thread runs, other commands, help and already restarted processes alone', () => {
    expect(wantsPoolRestart(argv('audit', 'night', '--jobs', '1'), [], {})).toBe(false);
    expect(wantsPoolRestart(argv('inspect', 'night', '--jobs', '2'), [], {})).toBe(false);
    expect(wantsPoolRestart(argv('camera', 'flats', '--jobs', '2'), [], {})).toBe(false);
    expect(wantsPoolRestart(argv('audit', '--help', '--jobs', '2'), [], {})).toBe(false);
    expect(wantsPoolRestart(argv('--version'), [], {})).toBe(false);
    expect(wantsPoolRestart(argv('audit', 'night', '--jobs', '2'), [POOL_V8_FLAG], {})).toBe(false);
    expect(wantsPoolRestart(argv('audit', 'night', '--jobs', '2'), [], { [NO_RESTART_ENV]: '1' })).toBe(false);
  });

  it('a --jobs value the parser will refuse does not restart (the error comes from one process)', () => {
    expect(wantsPoolRestart(argv('audit', 'night', '--jobs', 'two'), [], {})).toBe(false);
    expect(wantsPoolRestart(argv('audit', 'night', '--jobs', '0'), [], {})).toBe(false);
  });
});

describe('poolEnvironment', () => {
  it('adds the malloc tunables to GLIBC_TUNABLES, keeping what the user set', () => {
    expect(poolEnvironment({ HOME: '/h' })).toEqual({ HOME: '/h', GLIBC_TUNABLES: POOL_MALLOC_TUNABLES });
    expect(poolEnvironment({ GLIBC_TUNABLES: 'glibc.malloc.hugetlb=1' }).GLIBC_TUNABLES).toBe(`glibc.malloc.hugetlb=1:${POOL_MALLOC_TUNABLES}`);
  });
});
