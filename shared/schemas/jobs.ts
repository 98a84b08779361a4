import { z } from 'zod'
import { HAZARD_CATEGORIES } from '../types/breakdown'
import { isSingleLine } from './common'

const shortList = (what: string, max: number, length = 120) =>
  z.array(z.string().trim().min(1, `Remove the empty ${what} line or fill it in.`).max(length, `Keep each ${what} under ${length} characters.`))
    .max(max, `At most ${max} ${what} lines.`)

export const hazardSchema = z.object({
  category: z.enum(HAZARD_CATEGORIES, { error: 'Choose the kind of hazard.' }),
  description: z.string().trim().max(300, 'Keep the description under 300 characters.').default(''),
})

export const jobFieldsSchema = z.object({
  // Shown in the digest mail's lines, so one line only.
  title: z.string({ error: 'Give the job a title.' }).trim().min(2, 'Give the job a title.').max(120, 'Keep the title under 120 characters.')
    .refine(isSingleLine, 'Write the title on one line, without line breaks, tabs or other control characters.'),
  workAreaId: z.uuid('Choose a work area from the list.').nullable().default(null),
  purpose: z.string().trim().max(1000, 'Keep the purpose under 1000 characters.').default(''),
  hazards: z.array(hazardSchema).max(20, 'At most 20 hazards.').default([]),
  ppe: shortList('PPE', 20).default([]),
  toolsAndMaterials: shortList('tool or material', 50).default([]),
  workplaceArrangement: z.string().trim().max(1000, 'Keep this under 1000 characters.').default(''),
  coverageTarget: z.number({ error: 'Enter how many people the job needs ready.' }).int('Use a whole number.').min(0, 'Use 0 or more.').max(500, 'Use at most 500.').default(2),
})

export const createJobSchema = jobFieldsSchema
// Not jobFieldsSchema.partial(): zod 4 still applies a field's default inside .optional(), so a
// PATCH naming only the title would reset every other field. The defaults are taken off first.
const f = jobFieldsSchema.shape
export const updateJobSchema = z.object({
  title: f.title.optional(),
  workAreaId: f.workAreaId.unwrap().optional(),
  purpose: f.purpose.unwrap().optional(),
  hazards: f.hazards.unwrap().optional(),
  ppe: f.ppe.unwrap().optional(),
  toolsAndMaterials: f.toolsAndMaterials.unwrap().optional(),
  workplaceArrangement: f.workplaceArrangement.unwrap().optional(),
  coverageTarget: f.coverageTarget.unwrap().optional(),
}).refine(v => Object.values(v).some(value => value !== undefined), { message: 'Nothing to change.' })

export type JobFields = z.output<typeof jobFieldsSchema>
