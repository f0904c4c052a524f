#!/usr/bin/env node
// Entry point of the `bleedwright` CLI: loads the TypeScript sources through tsx.
import { register } from 'tsx/esm/api';
register();
await import('../cli/main.ts');
