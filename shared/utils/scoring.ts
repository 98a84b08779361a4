// Scoring rules of DESIGN.md §8, shared by the tablet (offline) and the server (at sync).
export const MARK_VALUES = ['unaided', 'cued', 'missed'] as const
export type MarkValue = (typeof MARK_VALUES)[number]

export const MARK_WEIGHTS: Record<MarkValue, number> = { unaided: 1, cued: 0.5, missed: 0 }

export const MARK_LABELS: Record<MarkValue, string> = { unaided: 'Unaided', cued: 'Cued', missed: 'Missed' }

/**
 * Pass score = 100 × mean mark value over the pass's elements; an element without a mark
 * counts as missed. A pass with no elements (a breakdown without key points has an empty T3)
 * has no score.
 */
export function passScore(elementIds: readonly string[], marks: ReadonlyMap<string, MarkValue>): number | null {
  if (!elementIds.length) return null
  const total = elementIds.reduce((sum, id) => sum + MARK_WEIGHTS[marks.get(id) ?? 'missed'], 0)
  return (100 * total) / elementIds.length
}

/** Recall score = mean of the latest T2, T3 and T4 pass scores that exist; null when none does. */
export function recallScore(latest: { T2: number | null, T3: number | null, T4: number | null }): number | null {
  const scores = [latest.T2, latest.T3, latest.T4].filter((s): s is number => s !== null)
  return scores.length ? scores.reduce((a, b) => a + b, 0) / scores.length : null
}

/** Scores are stored and shown to one decimal. */
export function roundScore(score: number | null): number | null {
  return score === null ? null : Math.round(score * 10) / 10
}
