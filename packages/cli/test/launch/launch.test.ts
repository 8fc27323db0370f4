import { describe, expect, it } from 'vitest';
import { NO_RESTART_ENV, POOL_MALLOC_TUNABLES, POOL_V8_FLAG, poolEnvironment, poolThreads, wantsPoolRestart } from '../../src/launch.js';
import { discardEarlyPool, openFramePool, startPoolEarly } from '../../src/io/pool.js';

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

describe('poolThreads: the worker threads a run will start', () => {
  it('is the --jobs value of audit and demo runs with two or more threads', () => {
    expect(poolThreads(argv('audit', 'night', '--jobs', '2'))).toBe(2);
    expect(poolThreads(argv('demo', '--jobs=3'))).toBe(3);
  });

  it('is undefined for one thread, other commands, help and values the parser refuses', () => {
    expect(poolThreads(argv('audit', 'night', '--jobs', '1'))).toBeUndefined();
    expect(poolThreads(argv('sky', 'lights', '--jobs', '2'))).toBeUndefined();
    expect(poolThreads(argv('audit', '-h', '--jobs', '2'))).toBeUndefined();
    expect(poolThreads(argv('audit', 'night', '--jobs', 'x'))).toBeUndefined();
    expect(poolThreads(argv())).toBeUndefined();
  });
});

describe('the pool started early (bin.ts) is the one the audit takes', () => {
  it('openFramePool returns it once when the thread count matches, a new pool otherwise', async () => {
    const early = startPoolEarly(3);
    expect(startPoolEarly(3)).toBe(early); // one early pool at most
    const first = openFramePool(3);
    expect(first).toBe(early);
    const second = openFramePool(3);
    expect(second).not.toBe(early); // taken once
    const unmatched = startPoolEarly(2);
    const other = openFramePool(4);
    expect(other).not.toBe(unmatched);
    expect(other.jobs).toBe(4);
    expect(openFramePool(2)).not.toBe(unmatched); // the unmatched one was dropped
    await Promise.all([first.destroy(), second.destroy(), other.destroy()]);
  });

  it('discardEarlyPool drops a pool no command took', async () => {
    const early = startPoolEarly(2);
    await discardEarlyPool();
    const fresh = openFramePool(2);
    expect(fresh).not.toBe(early);
    await fresh.destroy();
  });
});
