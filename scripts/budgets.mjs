// npm run test:budgets — the budgets of issue 7 on the last build (.output): JS per offline screen
// with size-limit (the lesson runner at most 2× a bare Nuxt page), then Lighthouse on sign-in, Today
// and the runner. The JS budgets are also part of `npm test` (they pass: 1.96× at the runner's
// try-out stage); Lighthouse is not yet: its performance score on Today and the runner does not meet
// its budget today (README, "Reliability"), and a gate that always fails would stop every change
// from landing. Both run even when the first fails, so one run reports both; the exit status says
// whether both were met.
import { spawnSync } from 'node:child_process'
import { existsSync } from 'node:fs'

const CHROMIUM = process.env.CHROMIUM_PATH || '/usr/bin/chromium'
const output = process.env.FOURFOLD_OUTPUT || '.output'
if (!existsSync(`${output}/server/index.mjs`)) {
  console.error(`No build in ${output}: run \`npx nuxt build\` (or \`npm test\`) first.`)
  process.exit(1)
}
const failed = [
  ['JS budgets (size-limit)', 'tests/budgets/js-size.mjs'],
  ['Lighthouse budgets', 'tests/budgets/lighthouse.mjs'],
].filter(([label, script]) => {
  console.log(`\n▶ ${label}`)
  const result = spawnSync('node', [script], { stdio: 'inherit', env: { ...process.env, CHROMIUM_PATH: CHROMIUM, CHROME_PATH: CHROMIUM } })
  if (result.status !== 0) console.error(`✖ ${label} failed`)
  return result.status !== 0
})
if (failed.length) process.exit(1)
