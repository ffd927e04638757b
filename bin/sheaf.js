#!/usr/bin/env node
// Thin launcher: the CLI is compiled from src/cli.ts by `npm run build`
// (which `npm install` runs through the `prepare` script).
import { main } from '../dist/cli.js';

main(process.argv.slice(2)).then(
  (code) => { process.exitCode = code; },
  (error) => {
    console.error(`sheaf: internal error: ${error?.stack ?? error}`);
    process.exitCode = 2;
  },
);
