#!/usr/bin/env node
// Loads the TypeScript entry point through tsx's loader, in this same process (so signals such as
// SIGTERM reach the service directly), with no build step.
import { register } from 'tsx/esm/api';

register();
await import('../services/cli.ts');
