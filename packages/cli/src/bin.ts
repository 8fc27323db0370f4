#!/usr/bin/env node
import { spawn } from 'node:child_process';
import { POOL_V8_FLAG, poolEnvironment, poolThreads, wantsPoolRestart } from './launch.js';

if (wantsPoolRestart(process.argv, process.execArgv, process.env)) {
  // Run the same command in a process with the pool's V8 and malloc settings; this one only waits and passes signals on.
  const child = spawn(process.execPath, [POOL_V8_FLAG, ...process.execArgv, ...process.argv.slice(1)], { stdio: 'inherit', env: poolEnvironment(process.env) });
  const forward = (signal: NodeJS.Signals) => () => child.kill(signal);
  for (const s of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) process.on(s, forward(s));
  child.on('error', (err) => {
    process.stderr.write(`subgauge: cannot start ${process.execPath}: ${err.message}\n`);
    process.exitCode = 2;
  });
  child.on('exit', (code, signal) => {
    if (signal) {
      // end as the child did: by the same signal, with the default action
      process.removeAllListeners(signal);
      process.kill(process.pid, signal);
    }
    process.exitCode = code ?? 1;
  });
} else {
  // A pool run starts its worker threads first: they boot on the other core while the commands load.
  const threads = poolThreads(process.argv);
  const poolModule = threads === undefined ? undefined : await import('./io/pool.js');
  if (threads !== undefined) poolModule?.startPoolEarly(threads);
  const { main } = await import('./main.js');
  process.exitCode = await main(process.argv);
  await poolModule?.discardEarlyPool();
}
