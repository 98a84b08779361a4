// What the jobs and breakdowns routes answer (see the jobs & breakdowns contract); dates arrive as JSON.
import type { BreakdownContent } from '#shared/schemas/breakdown'
import type { HazardCategory, VersionStatus } from '#shared/types/breakdown'

export type ApiDate = string | number

export interface Hazard { category: HazardCategory, description: string }
/** A hazard being typed into a form: the kind may not be chosen yet. */
export interface HazardDraft { category: HazardCategory | '', description: string }

export interface JobListItem {
  id: string
  title: string
  workAreaId: string | null
  workAreaName: string | null
  hazards: Hazard[]
  coverageTarget: number
  archivedAt: ApiDate | null
  published: { id: string, number: number, publishedAt: ApiDate } | null
  draft: { id: string, number: number, revision: number, updatedAt: ApiDate } | null
}

export interface VersionSummary {
  id: string
  number: number
  status: VersionStatus
  changeNote: string | null
  publishedAt: ApiDate | null
  publishedByName: string | null
  retiredAt: ApiDate | null
  createdAt: ApiDate
  updatedAt: ApiDate
}

export interface JobDetail {
  id: string
  title: string
  workAreaId: string | null
  workAreaName: string | null
  purpose: string
  hazards: Hazard[]
  ppe: string[]
  toolsAndMaterials: string[]
  workplaceArrangement: string
  coverageTarget: number
  archivedAt: ApiDate | null
  versions: VersionSummary[]
}

export interface VersionJob {
  id: string
  title: string
  purpose: string
  hazards: Hazard[]
  ppe: string[]
  toolsAndMaterials: string[]
  workplaceArrangement: string
  workAreaName: string | null
  coverageTarget: number
}

export interface VersionDetail {
  id: string
  jobId: string
  number: number
  status: VersionStatus
  revision: number
  content: BreakdownContent
  changeNote: string | null
  publishedAt: ApiDate | null
  publishedByName: string | null
  retiredAt: ApiDate | null
  basedOnVersionId: string | null
  createdAt: ApiDate
  updatedAt: ApiDate
  job: VersionJob
}

export interface WorkArea { id: string, name: string }

export interface UploadAnswer { id: string, url: string, thumbUrl: string, width: number, height: number }

/** The body of an error from our routes, as $fetch exposes it. */
export interface RouteError {
  statusCode?: number
  status?: number
  data?: { message?: string, data?: { message?: string, fieldErrors?: Record<string, string[]>, draftId?: string, currentRevision?: number } }
}
