// zod compiles a faster object parser with `new Function` where it may, and first probes whether it
// may. Under our Content-Security-Policy (no 'unsafe-eval', server/utils/security-headers.ts) that
// probe is a blocked eval, which Chromium reports as a violation even though zod catches it. In the
// browser the compiled parser buys nothing a person notices (form-sized input), so it is off here;
// the server keeps it (the sync merge validates thousands of events). Set at module top level, and
// this plugin sorts first ("0."), because the probe runs when the first object schema is built,
// which can be while a later plugin's imports load. `config` comes from zod's core module (the one
// the schemas share) rather than `z`: importing `z` here put much of zod into the script every page
// loads, the lesson runner's included (its scripts are budgeted, tests/budgets).
import { config } from 'zod/v4/core'

config({ jitless: true })

export default defineNuxtPlugin(() => {})
