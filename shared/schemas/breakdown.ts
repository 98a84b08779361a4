// A breakdown's content: units → important steps → key points, each with a lineage id that
// stays the same across versions (so versions can be compared and lessons can name elements).
// A draft may be unfinished (empty texts while typing); publishing needs `publishableContentSchema`.
import { z } from 'zod'
import { KEY_POINT_KINDS } from '../types/breakdown'

export const LIMITS = {
  units: 20,
  stepsPerUnit: 60,
  keyPointsPerStep: 20,
  stepText: 200,
  keyPointText: 300,
  reasonText: 500,
  unitTitle: 120,
} as const

const lineageId = z.uuid('Each element needs a valid id.')
const photoId = z.uuid('That photo id is not valid.').nullable().default(null)

export const keyPointSchema = z.object({
  id: lineageId,
  kind: z.enum(KEY_POINT_KINDS, { error: 'Choose a kind: quality, safety or knack.' }),
  text: z.string().trim().max(LIMITS.keyPointText, `Keep a key point under ${LIMITS.keyPointText} characters.`),
  reason: z.string().trim().max(LIMITS.reasonText, `Keep a reason under ${LIMITS.reasonText} characters.`).default(''),
  photoId,
})

export const stepSchema = z.object({
  id: lineageId,
  text: z.string().trim().max(LIMITS.stepText, `Keep an important step under ${LIMITS.stepText} characters.`),
  photoId,
  keyPoints: z.array(keyPointSchema).max(LIMITS.keyPointsPerStep, `At most ${LIMITS.keyPointsPerStep} key points per step.`).default([]),
})

export const unitSchema = z.object({
  id: lineageId,
  title: z.string().trim().max(LIMITS.unitTitle, `Keep a unit title under ${LIMITS.unitTitle} characters.`).default(''),
  steps: z.array(stepSchema).max(LIMITS.stepsPerUnit, `At most ${LIMITS.stepsPerUnit} steps per unit.`).default([]),
})

function uniqueIds(content: { units: Array<{ id: string, steps: Array<{ id: string, keyPoints: Array<{ id: string }> }> }> }, ctx: z.RefinementCtx) {
  const seen = new Set<string>()
  for (const unit of content.units) {
    for (const id of [unit.id, ...unit.steps.flatMap(s => [s.id, ...s.keyPoints.map(k => k.id)])]) {
      if (seen.has(id)) ctx.addIssue({ code: 'custom', message: `The id ${id} is used twice; every unit, step and key point needs its own.`, path: ['units'] })
      seen.add(id)
    }
  }
}

export const breakdownContentSchema = z.object({
  units: z.array(unitSchema).min(1, 'A breakdown has at least one unit.').max(LIMITS.units, `At most ${LIMITS.units} units.`),
}).superRefine(uniqueIds)

export type BreakdownContent = z.output<typeof breakdownContentSchema>
export type BreakdownUnit = BreakdownContent['units'][number]
export type BreakdownStep = BreakdownUnit['steps'][number]
export type BreakdownKeyPoint = BreakdownStep['keyPoints'][number]

/** What publishing asks beyond a draft: something to teach, and no blank texts. */
export const publishableContentSchema = breakdownContentSchema.superRefine((content, ctx) => {
  const steps = content.units.flatMap(u => u.steps)
  if (!steps.length) ctx.addIssue({ code: 'custom', message: 'Add at least one important step before publishing.', path: ['units'] })
  content.units.forEach((unit, u) => {
    if (content.units.length > 1 && !unit.title) ctx.addIssue({ code: 'custom', message: `Unit ${u + 1} needs a title.`, path: ['units', u, 'title'] })
    if (content.units.length > 1 && !unit.steps.length) ctx.addIssue({ code: 'custom', message: `Unit ${u + 1} has no steps.`, path: ['units', u, 'steps'] })
    unit.steps.forEach((step, s) => {
      if (!step.text) ctx.addIssue({ code: 'custom', message: `Step ${s + 1}${content.units.length > 1 ? ` of unit ${u + 1}` : ''} has no text.`, path: ['units', u, 'steps', s, 'text'] })
      step.keyPoints.forEach((kp, k) => {
        if (!kp.text) ctx.addIssue({ code: 'custom', message: `Key point ${k + 1} of step ${s + 1} has no text.`, path: ['units', u, 'steps', s, 'keyPoints', k, 'text'] })
      })
    })
  })
})

/** Body of PATCH /api/versions/[id]: the content, and the revision it was based on. */
export const saveDraftSchema = z.object({
  revision: z.number({ error: 'Send the revision this edit is based on.' }).int().min(0),
  content: breakdownContentSchema,
})

export const publishSchema = z.object({
  changeNote: z.string({ error: 'Say what changed in this version.' }).trim().min(3, 'Say what changed in this version.').max(1000, 'Keep the change note under 1000 characters.'),
})

export function emptyContent(newId: () => string): BreakdownContent {
  return { units: [{ id: newId(), title: '', steps: [] }] }
}
