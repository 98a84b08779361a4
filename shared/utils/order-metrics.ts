// How well the learner kept the steps in order (T2): normalised Kendall tau distance between the
// order they named the steps in and the breakdown's order, over the steps they named.

/** Discordant pairs: pairs of named steps that the learner put the other way round. */
export function discordantPairs(referenceOrder: readonly string[], recitedOrder: readonly string[]): { discordant: number, pairs: number } {
  const rank = new Map(referenceOrder.map((id, i) => [id, i]))
  // Only steps of the breakdown count, each once, at the place it was first named.
  const seen = new Set<string>()
  const ranks: number[] = []
  for (const id of recitedOrder) {
    if (!rank.has(id) || seen.has(id)) continue
    seen.add(id)
    ranks.push(rank.get(id)!)
  }
  let discordant = 0
  for (let i = 0; i < ranks.length; i++) {
    for (let j = i + 1; j < ranks.length; j++) if (ranks[i]! > ranks[j]!) discordant++
  }
  return { discordant, pairs: (ranks.length * (ranks.length - 1)) / 2 }
}

/** Order score = 100 × (1 − discordant / all pairs); 100 when fewer than two steps were named. */
export function orderScore(referenceOrder: readonly string[], recitedOrder: readonly string[]): number {
  const { discordant, pairs } = discordantPairs(referenceOrder, recitedOrder)
  return pairs === 0 ? 100 : 100 * (1 - discordant / pairs)
}
