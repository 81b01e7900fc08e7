#!/usr/bin/env node
// The nearveil command. Sources are TypeScript; tsx loads them without a build step.
import { register } from 'tsx/esm/api';

register();
const { main } = await import('./main.ts');
process.exitCode = await main(process.argv.slice(2));
