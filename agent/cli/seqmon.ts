#!/usr/bin/env node
/** Entry point of the `seqmon` bin: runs the command line and sets the exit code. */
import { main } from './main.js';
import { EXIT_RUNTIME } from './io.js';

main(process.argv.slice(2), { stdin: process.stdin, stdout: process.stdout, stderr: process.stderr, env: process.env })
  .then((code) => {
    process.exitCode = code;
    // A service that has closed everything it opened exits now, even if a
    // library still holds a stray timer (stdout/stderr are synchronous here).
    const command = process.argv[2];
    if (command === 'run' || command === 'demo') process.exit(code);
  })
  .catch((err: unknown) => {
    process.stderr.write(`seqmon: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}\n`);
    process.exitCode = EXIT_RUNTIME;
  });
