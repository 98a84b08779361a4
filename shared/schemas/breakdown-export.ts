// The breakdown export document: Fourfold's own, documented JSON format for moving a job and
// one version of its breakdown between organisations (GET /api/versions/[id]/export writes it,
// POST /api/jobs/import reads it). DEVELOPERS.md "Breakdown export format" describes it for people.
//
// Rules of the format:
// - `format` is always 'fourfold.breakdown' and `formatVersion` is 1. A change that an older
//   reader would misread raises `formatVersion`; adding an optional field does not.
// - Fields not listed here are ignored on import (a newer writer may add some).
// - Times are ISO 8601 strings in UTC (`2026-03-01T09:30:00.000Z`).
// - Ids inside `breakdown` are the lineage ids of the exporting organisation (UUIDs); they are
//   kept on import, so two versions exported from one job can still be compared.
// - Photos do not travel: `photoId` values are kept in the document for reference, and import
//   sets every one of them to null (the answer says how many were dropped).
import { z } from 'zod'
import { jobFieldsSchema } from './jobs'
import { breakdownContentSchema } from './breakdown'
import { VERSION_STATUSES } from '../types/breakdown'

export const BREAKDOWN_EXPORT_FORMAT = 'fourfold.breakdown'
export const BREAKDOWN_EXPORT_FORMAT_VERSION = 1

const isoTime = z.iso.datetime({ offset: true, error: 'Use an ISO 8601 date and time, such as 2026-03-01T09:30:00.000Z.' })

/** The job, as in the job form, except that its work area travels by name (ids differ between organisations). */
export const exportedJobSchema = jobFieldsSchema.omit({ workAreaId: true }).extend({
  // Matched by name against the importing organisation's work areas; no match → no work area.
  workAreaName: z.string({ error: 'Give the work area\'s name, or null.' }).trim().max(80, 'Keep the work area name under 80 characters.').nullable().default(null),
})

/** Where the content came from. Informative only: an import always starts a new draft v1. */
export const exportedVersionSchema = z.object({
  number: z.number({ error: 'Give the version number.' }).int('Use a whole number.').min(1, 'Version numbers start at 1.'),
  status: z.enum(VERSION_STATUSES, { error: 'Use draft, published or retired.' }),
  changeNote: z.string({ error: 'Give the change note as text, or null.' }).max(1000, 'Keep the change note under 1000 characters.').nullable().default(null),
  publishedAt: isoTime.nullable().default(null),
})

export const breakdownExportSchema = z.object({
  format: z.literal(BREAKDOWN_EXPORT_FORMAT, { error: `This is not a Fourfold breakdown export (format must be "${BREAKDOWN_EXPORT_FORMAT}").` }),
  formatVersion: z.literal(BREAKDOWN_EXPORT_FORMAT_VERSION, { error: `This Fourfold reads format version ${BREAKDOWN_EXPORT_FORMAT_VERSION} only.` }),
  exportedAt: isoTime,
  job: exportedJobSchema,
  version: exportedVersionSchema,
  // The same content schema a draft save uses: units → important steps → key points.
  breakdown: breakdownContentSchema,
})

export type BreakdownExport = z.output<typeof breakdownExportSchema>
/** What an exporter writes (before defaults apply): every field present. */
export type BreakdownExportInput = z.input<typeof breakdownExportSchema>
