// The e2e and browser projects test the built server. `npm test` builds once before
// vitest starts (FOURFOLD_BUILT=1); running a project directly builds here instead.
import { execSync } from 'node:child_process'
import { existsSync } from 'node:fs'

export default function setup() {
  const output = process.env.FOURFOLD_OUTPUT || '.output'
  if (process.env.FOURFOLD_BUILT === '1' && existsSync(`${output}/server/index.mjs`)) return
  if (process.env.FOURFOLD_OUTPUT) throw new Error(`FOURFOLD_OUTPUT=${output} holds no build (server/index.mjs)`)
  execSync('npx nuxt build', { stdio: 'inherit', env: { ...process.env, NODE_ENV: 'production' } })
  process.env.FOURFOLD_BUILT = '1'
}
