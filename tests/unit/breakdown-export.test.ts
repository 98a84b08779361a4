// The breakdown export document (shared/schemas/breakdown-export.ts): what parses, and how a
// malformed one is reported, field by field.
import { randomUUID } from 'node:crypto'
import { describe, expect, it } from 'vitest'
import { breakdownExportSchema, type BreakdownExportInput } from '../../shared/schemas/breakdown-export'

const issuesByPath = (r: { success: boolean, error?: { issues: Array<{ path: PropertyKey[], message: string }> } }) =>
  Object.fromEntries((r.error?.issues ?? []).map(i => [i.path.join('.'), i.message]))

function validDocument(): BreakdownExportInput {
  return {
    format: 'fourfold.breakdown',
    formatVersion: 1,
    exportedAt: '2026-03-01T09:30:00.000Z',
    job: {
      title: 'Shape baguettes',
      purpose: 'Even loaves that bake through.',
      hazards: [{ category: 'sharp-edges', description: 'Lame blade' }],
      ppe: ['Cut-resistant glove'],
      toolsAndMaterials: ['Bench scraper', 'Couche'],
      workplaceArrangement: 'Dough on the left, couche on the right.',
      coverageTarget: 3,
      workAreaName: 'Bakehouse',
    },
    version: { number: 2, status: 'published', changeNote: 'Shorter pre-shape rest.', publishedAt: '2026-02-27T14:00:00.000Z' },
    breakdown: {
      units: [{
        id: randomUUID(),
        title: '',
        steps: [
          { id: randomUUID(), text: 'Pre-shape the dough', photoId: randomUUID(), keyPoints: [
            { id: randomUUID(), kind: 'quality', text: 'Seam side up', reason: 'So the skin stays taut', photoId: null },
            { id: randomUUID(), kind: 'safety', text: 'Blade away from the hand', reason: 'A lame cuts deep', photoId: null },
          ] },
          { id: randomUUID(), text: 'Roll out', photoId: null, keyPoints: [] },
        ],
      }],
    },
  }
}

describe('breakdown export schema', () => {
  it('parses a valid document and keeps its content as given', () => {
    const doc = validDocument()
    const r = breakdownExportSchema.safeParse(doc)
    expect(r.success, JSON.stringify(r.error?.issues)).toBe(true)
    expect(r.data).toEqual(doc)
  })

  it('fills optional fields a hand-written document leaves out', () => {
    const doc = validDocument()
    const r = breakdownExportSchema.safeParse({ ...doc, job: { title: 'Proof rolls' }, version: { number: 1, status: 'draft' } })
    expect(r.success, JSON.stringify(r.error?.issues)).toBe(true)
    expect(r.data!.job).toEqual({ title: 'Proof rolls', purpose: '', hazards: [], ppe: [], toolsAndMaterials: [], workplaceArrangement: '', coverageTarget: 2, workAreaName: null })
    expect(r.data!.version).toEqual({ number: 1, status: 'draft', changeNote: null, publishedAt: null })
  })

  it('names every wrong field by its path', () => {
    const doc = validDocument() as any
    doc.formatVersion = 2
    doc.exportedAt = 'yesterday'
    doc.job.title = 7
    doc.job.coverageTarget = '3'
    doc.job.hazards[0].category = 'dragons'
    doc.version.status = 'approved'
    doc.breakdown.units[0].steps[1].text = ['Roll', 'out']
    doc.breakdown.units[0].steps[0].keyPoints[1].kind = 'danger'
    doc.breakdown.units[0].steps[0].photoId = 'photo.jpg'
    const r = breakdownExportSchema.safeParse(doc)
    expect(r.success).toBe(false)
    expect(issuesByPath(r)).toEqual({
      'formatVersion': 'This Fourfold reads format version 1 only.',
      'exportedAt': 'Use an ISO 8601 date and time, such as 2026-03-01T09:30:00.000Z.',
      'job.title': 'Give the job a title.',
      'job.coverageTarget': 'Enter how many people the job needs ready.',
      'job.hazards.0.category': 'Choose the kind of hazard.',
      'version.status': 'Use draft, published or retired.',
      'breakdown.units.0.steps.0.photoId': 'That photo id is not valid.',
      'breakdown.units.0.steps.0.keyPoints.1.kind': 'Choose a kind: quality, safety or knack.',
      'breakdown.units.0.steps.1.text': expect.any(String),
    })
  })

  it('refuses something that is not a Fourfold export with one plain message', () => {
    const r = breakdownExportSchema.safeParse({ ...validDocument(), format: 'someone.else' })
    expect(issuesByPath(r)).toEqual({ format: 'This is not a Fourfold breakdown export (format must be "fourfold.breakdown").' })
  })

  it('refuses a breakdown that uses one lineage id twice', () => {
    const doc = validDocument()
    const steps = doc.breakdown.units[0]!.steps!
    steps[1]!.id = steps[0]!.id
    const r = breakdownExportSchema.safeParse(doc)
    expect(issuesByPath(r)['breakdown.units']).toMatch(/used twice/)
  })
})
