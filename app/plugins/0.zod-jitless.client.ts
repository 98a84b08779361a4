// zod compiles a faster object parser with `new Function` where it may, and first probes whether it
// may. Under our Content-Security-Policy (no 'unsafe-eval', server/utils/security-headers.ts) that
// probe is a blocked eval, which Chromium reports as a violation even though zod catches it. In the
// browser the compiled parser buys nothing a person notices (form-sized input), so it is off here;
// the server keeps it (the sync merge validates thousands of events). Set at module top level, and
// this plugin sorts first ("0."), because the probe runs when the first object schema is built,
// which can be while a later plugin's imports load.
//
// zod keeps that setting on `globalThis.__zod_globalConfig` (zod/v4/core/core.js: `config()` writes
// into the same object, created by whichever comes first), so setting it there needs no import of
// zod: importing even zod's core module put about 3 KiB (gzip) of zod into the script every page
// loads, the lesson runner's included (its scripts are budgeted, tests/budgets). A unit test
// (tests/unit/zod-jitless.test.ts) checks that zod still reads it from there.
import { setZodJitless } from '~/utils/zod-jitless'

setZodJitless()

export default defineNuxtPlugin(() => {})
