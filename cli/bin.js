#!/usr/bin/env node
// The `runnel` command. The source is TypeScript; tsx (a runtime dependency) compiles it on the fly.
import { register } from 'tsx/esm/api';

register();
await import(new URL('./main.ts', import.meta.url).href);
