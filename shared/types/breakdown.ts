// The words of a job breakdown (DESIGN.md §3), shared by the editor, the runner and the server.
export const KEY_POINT_KINDS = ['quality', 'safety', 'knack'] as const
export type KeyPointKind = (typeof KEY_POINT_KINDS)[number]

export const KEY_POINT_KIND_LABELS: Record<KeyPointKind, string> = {
  quality: 'Quality',
  safety: 'Safety',
  knack: 'Knack',
}

export const KEY_POINT_KIND_HINTS: Record<KeyPointKind, string> = {
  quality: 'makes or breaks the job',
  safety: 'could injure someone',
  knack: 'makes the work easier: feel, trick, timing',
}

export const HAZARD_CATEGORIES = ['moving-parts', 'sharp-edges', 'heat', 'chemicals', 'biological', 'lifting', 'electrical', 'other'] as const
export type HazardCategory = (typeof HAZARD_CATEGORIES)[number]

export const HAZARD_CATEGORY_LABELS: Record<HazardCategory, string> = {
  'moving-parts': 'Moving parts and stored energy',
  'sharp-edges': 'Sharp edges',
  'heat': 'Heat',
  'chemicals': 'Chemicals',
  'biological': 'Biological',
  'lifting': 'Lifting',
  'electrical': 'Electrical',
  'other': 'Other',
}

export const VERSION_STATUSES = ['draft', 'published', 'retired'] as const
export type VersionStatus = (typeof VERSION_STATUSES)[number]

export const VERSION_STATUS_LABELS: Record<VersionStatus, string> = {
  draft: 'Draft',
  published: 'Published',
  retired: 'Retired',
}
