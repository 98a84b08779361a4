// The draft open in the breakdown editor: its content and every edit to it. Components call these
// actions instead of changing props; the autosave watches `content`. Ids of existing elements
// never change (they are lineage ids); new elements get fresh ones.
import { defineStore } from 'pinia'
import type { BreakdownContent, BreakdownKeyPoint, BreakdownStep, BreakdownUnit } from '#shared/schemas/breakdown'
import type { KeyPointKind } from '#shared/types/breakdown'

function clone<T>(value: T): T {
  return JSON.parse(JSON.stringify(value)) as T
}

export const useBreakdownDraftStore = defineStore('breakdown-draft', () => {
  const versionId = ref('')
  const content = ref<BreakdownContent>({ units: [] })
  /** Units on screen: on when the draft has titled or several units, or the coach chose to split. */
  const showUnits = ref(false)
  /** The latest thing to tell a screen reader (the page puts it in an aria-live region). */
  const announcement = ref('')
  /** Problems the server found when publishing, by path (units.0.steps.2.text). */
  const publishErrors = ref<Record<string, string[]>>({})

  function load(id: string, next: BreakdownContent) {
    versionId.value = id
    content.value = clone(next)
    if (!content.value.units.length) content.value.units.push({ id: newElementId(), title: '', steps: [] })
    showUnits.value = content.value.units.length > 1 || Boolean(content.value.units[0]?.title)
    announcement.value = ''
    publishErrors.value = {}
  }

  function announce(text: string) {
    // Cleared first so the same words said twice are announced twice.
    announcement.value = ''
    nextTick(() => (announcement.value = text))
  }

  const hasManyUnits = computed(() => content.value.units.length > 1)
  function stepName(u: number, s: number) {
    return hasManyUnits.value ? `Step ${s + 1} of unit ${u + 1}` : `Step ${s + 1}`
  }

  function locateStep(stepId: string): { unit: BreakdownUnit, u: number, step: BreakdownStep, s: number } | null {
    for (const [u, unit] of content.value.units.entries()) {
      const s = unit.steps.findIndex(x => x.id === stepId)
      if (s >= 0) return { unit, u, step: unit.steps[s]!, s }
    }
    return null
  }

  function locateKeyPoint(keyPointId: string): { step: BreakdownStep, u: number, s: number, keyPoint: BreakdownKeyPoint, k: number } | null {
    for (const [u, unit] of content.value.units.entries()) {
      for (const [s, step] of unit.steps.entries()) {
        const k = step.keyPoints.findIndex(x => x.id === keyPointId)
        if (k >= 0) return { step, u, s, keyPoint: step.keyPoints[k]!, k }
      }
    }
    return null
  }

  /** Paths shift when things move, so publish problems found before a move no longer point right. */
  function structureChanged() {
    publishErrors.value = {}
  }

  function clearErrors(prefix: string, exact = false) {
    const hit = (k: string) => k === prefix || (!exact && k.startsWith(`${prefix}.`))
    if (!Object.keys(publishErrors.value).some(hit)) return
    publishErrors.value = Object.fromEntries(Object.entries(publishErrors.value).filter(([k]) => !hit(k)))
  }

  function move<T>(list: T[], from: number, to: number) {
    const [item] = list.splice(from, 1)
    list.splice(to, 0, item!)
  }

  // ---- units ----
  function splitIntoUnits() {
    showUnits.value = true
    if (content.value.units.length === 1) content.value.units.push({ id: newElementId(), title: '', steps: [] })
    structureChanged()
    announce('The breakdown is now split into units. Give each unit a title.')
  }

  function addUnit(): string {
    const id = newElementId()
    content.value.units.push({ id, title: '', steps: [] })
    announce(`Unit ${content.value.units.length} added.`)
    return id
  }

  function updateUnit(unitId: string, patch: { title: string }) {
    const u = content.value.units.findIndex(x => x.id === unitId)
    if (u < 0) return
    Object.assign(content.value.units[u]!, patch)
    clearErrors(`units.${u}.title`)
  }

  /** A removed unit's steps join the unit before it (or after it), so nothing written is lost. */
  function removeUnit(unitId: string) {
    const u = content.value.units.findIndex(x => x.id === unitId)
    if (u < 0 || content.value.units.length < 2) return
    const [removed] = content.value.units.splice(u, 1)
    const into = content.value.units[Math.max(0, u - 1)]!
    if (u === 0) into.steps.unshift(...removed!.steps)
    else into.steps.push(...removed!.steps)
    structureChanged()
    announce(removed!.steps.length
      ? `Unit ${u + 1} removed; its ${removed!.steps.length} steps joined unit ${Math.max(1, u)}.`
      : `Unit ${u + 1} removed.`)
  }

  function stopUsingUnits() {
    if (content.value.units.length !== 1) return
    content.value.units[0]!.title = ''
    showUnits.value = false
    structureChanged()
    announce('Units removed; the steps are one list again.')
  }

  function moveUnit(from: number, to: number) {
    const units = content.value.units
    if (from === to || to < 0 || to >= units.length) return
    move(units, from, to)
    structureChanged()
    announce(`Unit ${from + 1} moved to position ${to + 1}.`)
  }

  // ---- steps ----
  function addStep(unitId: string): string {
    const unit = content.value.units.find(x => x.id === unitId)
    const id = newElementId()
    unit?.steps.push({ id, text: '', photoId: null, keyPoints: [] })
    // "Add at least one step" and "this unit has no steps" are answered; other problems stay.
    clearErrors('units', true)
    clearErrors(`units.${content.value.units.indexOf(unit!)}.steps`, true)
    return id
  }

  function updateStep(stepId: string, patch: Partial<Pick<BreakdownStep, 'text' | 'photoId'>>) {
    const found = locateStep(stepId)
    if (!found) return
    Object.assign(found.step, patch)
    if (patch.text !== undefined) clearErrors(`units.${found.u}.steps.${found.s}.text`)
  }

  function removeStep(stepId: string) {
    const found = locateStep(stepId)
    if (!found) return
    found.unit.steps.splice(found.s, 1)
    structureChanged()
    announce(`${stepName(found.u, found.s)} removed.`)
  }

  /** Within a unit (drag, or the buttons inside a unit). */
  function moveStepWithin(unitId: string, from: number, to: number) {
    const u = content.value.units.findIndex(x => x.id === unitId)
    const unit = content.value.units[u]
    if (!unit || from === to || to < 0 || to >= unit.steps.length) return
    move(unit.steps, from, to)
    structureChanged()
    announce(`${stepName(u, from)} moved to position ${to + 1}.`)
  }

  /** One place up or down; at the edge of a unit, into the neighbouring unit. */
  function nudgeStep(stepId: string, delta: -1 | 1) {
    const found = locateStep(stepId)
    if (!found) return
    const { unit, u, s } = found
    const to = s + delta
    if (to >= 0 && to < unit.steps.length) return moveStepWithin(unit.id, s, to)
    const neighbour = content.value.units[u + delta]
    if (!neighbour) return
    const [step] = unit.steps.splice(s, 1)
    if (delta < 0) neighbour.steps.push(step!)
    else neighbour.steps.unshift(step!)
    structureChanged()
    const position = delta < 0 ? neighbour.steps.length : 1
    announce(`${stepName(u, s)} moved to unit ${u + delta + 1}, position ${position}.`)
  }

  function canNudgeStep(u: number, s: number, delta: -1 | 1) {
    const unit = content.value.units[u]
    if (!unit) return false
    const to = s + delta
    return (to >= 0 && to < unit.steps.length) || Boolean(content.value.units[u + delta])
  }

  // ---- key points ----
  function addKeyPoint(stepId: string, kind: KeyPointKind = 'quality'): string {
    const found = locateStep(stepId)
    const id = newElementId()
    found?.step.keyPoints.push({ id, kind, text: '', reason: '', photoId: null })
    return id
  }

  function updateKeyPoint(keyPointId: string, patch: Partial<Pick<BreakdownKeyPoint, 'text' | 'reason' | 'kind' | 'photoId'>>) {
    const found = locateKeyPoint(keyPointId)
    if (!found) return
    Object.assign(found.keyPoint, patch)
    for (const field of Object.keys(patch)) clearErrors(`units.${found.u}.steps.${found.s}.keyPoints.${found.k}.${field}`)
  }

  function removeKeyPoint(keyPointId: string) {
    const found = locateKeyPoint(keyPointId)
    if (!found) return
    found.step.keyPoints.splice(found.k, 1)
    structureChanged()
    announce(`Key point ${found.k + 1} of ${stepName(found.u, found.s).toLowerCase()} removed.`)
  }

  function moveKeyPoint(stepId: string, from: number, to: number) {
    const found = locateStep(stepId)
    const list = found?.step.keyPoints
    if (!found || !list || from === to || to < 0 || to >= list.length) return
    move(list, from, to)
    structureChanged()
    announce(`Key point ${from + 1} of ${stepName(found.u, found.s).toLowerCase()} moved to position ${to + 1}.`)
  }

  return {
    versionId, content, showUnits, announcement, publishErrors, hasManyUnits,
    load, announce, stepName, locateStep, locateKeyPoint,
    splitIntoUnits, addUnit, updateUnit, removeUnit, stopUsingUnits, moveUnit,
    addStep, updateStep, removeStep, moveStepWithin, nudgeStep, canNudgeStep,
    addKeyPoint, updateKeyPoint, removeKeyPoint, moveKeyPoint,
  }
})
