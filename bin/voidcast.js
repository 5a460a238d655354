#!/usr/bin/env node
// The installed `voidcast` command: registers tsx so the TypeScript sources run as they are.
import { register } from 'tsx/esm/api';

register();
const { main, processIo } = await import('../src/cli/main.ts');
process.exitCode = await main(process.argv.slice(2), processIo);
