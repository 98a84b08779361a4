// Drag to reorder one list with sortablejs (through @vueuse/integrations), touch friendly:
// only the visible handle starts a drag, a touch must rest briefly first (so scrolling still
// works), and the pointer-event fallback behaves the same for mouse, pen and finger.
import { insertNodeAt, removeNode, useSortable } from '@vueuse/integrations/useSortable'
import type { Ref } from 'vue'

export function useSortableList(el: Ref<HTMLElement | null>, handle: string, onMove: (from: number, to: number) => void) {
  return useSortable(el, [], {
    watchElement: true,
    handle,
    delay: 180,
    delayOnTouchOnly: true,
    touchStartThreshold: 4,
    forceFallback: true,
    fallbackOnBody: true,
    fallbackTolerance: 3,
    animation: 150,
    ghostClass: 'sortable-ghost',
    chosenClass: 'sortable-chosen',
    dragClass: 'sortable-drag',
    onUpdate(event) {
      const { oldIndex, newIndex } = event
      // Sortable moved the element itself; put it back and let Vue move it from the data.
      removeNode(event.item)
      insertNodeAt(event.from, event.item, oldIndex!)
      if (oldIndex !== undefined && newIndex !== undefined) onMove(oldIndex, newIndex)
    },
  })
}
