// Whether the browser agreed to keep this site's storage when space runs low (asked by
// plugins/storage-persist.client.ts once someone is signed in).
export interface StorageKeptState {
  /** null until the browser has answered. */
  kept: boolean | null
  /** False where the browser has no Storage API (then nothing can be asked). */
  supported: boolean
}

export function useStorageKept() {
  return useState<StorageKeptState>('storage-kept', () => ({ kept: null, supported: true }))
}
