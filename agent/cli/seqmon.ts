#!/usr/bin/env node
/** Entry point of the `seqmon` bin: runs the command line and sets the exit code. */
import { main } from './main.js';
import { EXIT_RUNTIME } from './io.js';

main(process.argv.slice(2), { stdin: process.stdin, stdout: process.stdout, stderr: process.stderr, env: process.env })
  .then((code) => {
    process.exitCode = code;
  })
  .catch((err: unknown) => {
    process.stderr.write(`seqmon: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}\n`);
    process.exitCode = EXIT_RUNTIME;
  });
