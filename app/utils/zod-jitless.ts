// Turns off zod's compiled parsers in this browser without loading zod (see app/plugins/0.zod-jitless.client.ts).

/** zod's global settings as zod/v4/core/core.js keeps them on globalThis. */
interface ZodGlobalConfigHolder { __zod_globalConfig?: { jitless?: boolean } }

/** Sets `jitless` in zod's global settings, whether zod has loaded yet or not. */
export function setZodJitless(holder: ZodGlobalConfigHolder = globalThis as ZodGlobalConfigHolder) {
  holder.__zod_globalConfig ??= {}
  holder.__zod_globalConfig.jitless = true
}
