import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { ApiError } from '@/api/http'
import { readStoredWorkingCopy, templateDraftStorageKey, useTemplateAutosave } from '@/composables/useTemplateAutosave'

class MemoryStorage implements Storage {
  private items = new Map<string, string>()
  get length() {
    return this.items.size
  }
  clear() {
    this.items.clear()
  }
  getItem(key: string) {
    return this.items.get(key) ?? null
  }
  key(i: number) {
    return [...this.items.keys()][i] ?? null
  }
  removeItem(key: string) {
    this.items.delete(key)
  }
  setItem(key: string, value: string) {
    this.items.set(key, value)
  }
}

const key = templateDraftStorageKey('tpl-1', 3)
const json = (title: string) => JSON.stringify({ title, unitSystem: 'IP', sections: [] })

let storage: MemoryStorage
beforeEach(() => {
  vi.useFakeTimers()
  storage = new MemoryStorage()
})
afterEach(() => {
  vi.useRealTimers()
})

function setup(save: (definition: unknown) => Promise<{ updatedAt: string }>, onRejected = vi.fn()) {
  const autosave = useTemplateAutosave({ storageKey: key, save, debounceMs: 1000, retryMs: 5000, storage, onRejected })
  autosave.setBaseline(json('Saved'), '2026-12-01T10:00:00.000Z')
  return { autosave, onRejected }
}

describe('useTemplateAutosave', () => {
  it('when a valid change is made, then it is kept locally, saved after the pause, and the local copy is dropped', async () => {
    const save = vi.fn().mockResolvedValue({ updatedAt: '2026-12-01T10:01:00.000Z' })
    const { autosave } = setup(save)
    autosave.update(json('Edited'), 0)
    expect(autosave.status.value).toBe('pending')
    expect(readStoredWorkingCopy(key, storage)?.definition).toEqual(JSON.parse(json('Edited')))
    expect(save).not.toHaveBeenCalled()
    await vi.advanceTimersByTimeAsync(1000)
    expect(save).toHaveBeenCalledWith(JSON.parse(json('Edited')))
    expect(autosave.status.value).toBe('saved')
    expect(autosave.label.value).toBe('Saved')
    expect(readStoredWorkingCopy(key, storage)).toBeNull()
    autosave.dispose()
  })

  it('when the working copy has problems, then nothing is sent, the status counts them and the work is kept locally', async () => {
    const save = vi.fn()
    const { autosave } = setup(save)
    autosave.update(json('Half done'), 3)
    await vi.advanceTimersByTimeAsync(5000)
    expect(save).not.toHaveBeenCalled()
    expect(autosave.status.value).toBe('invalid')
    expect(autosave.label.value).toBe('Not saved: 3 problems')
    expect(readStoredWorkingCopy(key, storage)).toMatchObject({ definition: JSON.parse(json('Half done')), baseUpdatedAt: '2026-12-01T10:00:00.000Z' })
    autosave.dispose()
  })

  it('when the server cannot be reached, then the status says offline, the work stays local and the save is retried', async () => {
    const save = vi
      .fn()
      .mockRejectedValueOnce(new ApiError(0, 'network', 'The server cannot be reached'))
      .mockResolvedValueOnce({ updatedAt: '2026-12-01T10:05:00.000Z' })
    const { autosave } = setup(save)
    autosave.update(json('Edited offline'), 0)
    await vi.advanceTimersByTimeAsync(1000)
    expect(autosave.status.value).toBe('offline')
    expect(autosave.label.value).toBe('Offline: kept on this device')
    expect(readStoredWorkingCopy(key, storage)).not.toBeNull()
    await vi.advanceTimersByTimeAsync(5000)
    expect(save).toHaveBeenCalledTimes(2)
    expect(autosave.status.value).toBe('saved')
    expect(readStoredWorkingCopy(key, storage)).toBeNull()
    autosave.dispose()
  })

  it('when the server refuses the definition, then its problems by path are handed on and the work stays local', async () => {
    const save = vi.fn().mockRejectedValue(
      new ApiError(400, 'invalid_definition', 'The definition is invalid', { 'sections[0].steps[0].fields[0].rule.key': 'unknown design value' }),
    )
    const { autosave, onRejected } = setup(save)
    autosave.update(json('Refused'), 0)
    await vi.advanceTimersByTimeAsync(1000)
    expect(autosave.status.value).toBe('rejected')
    expect(onRejected).toHaveBeenCalledWith([{ path: 'sections[0].steps[0].fields[0].rule.key', message: 'unknown design value' }])
    expect(readStoredWorkingCopy(key, storage)).not.toBeNull()
    autosave.dispose()
  })

  it('when the version is no longer a draft, then saving stops but later edits are still kept locally', async () => {
    const save = vi.fn().mockRejectedValue(new ApiError(409, 'version_frozen', 'Version 3 is published'))
    const { autosave } = setup(save)
    autosave.update(json('Too late'), 0)
    await vi.advanceTimersByTimeAsync(1000)
    expect(autosave.status.value).toBe('frozen')
    autosave.update(json('Still typing'), 0)
    await vi.advanceTimersByTimeAsync(10000)
    expect(save).toHaveBeenCalledTimes(1)
    expect(readStoredWorkingCopy(key, storage)?.definition).toEqual(JSON.parse(json('Still typing')))
    autosave.dispose()
  })

  it('when an edit arrives while a save is on its way, then that edit is saved next and nothing is lost', async () => {
    let finish: (v: { updatedAt: string }) => void = () => undefined
    const save = vi
      .fn()
      .mockImplementationOnce(() => new Promise((resolve) => (finish = resolve)))
      .mockResolvedValueOnce({ updatedAt: '2026-12-01T10:09:00.000Z' })
    const { autosave } = setup(save)
    autosave.update(json('First'), 0)
    await vi.advanceTimersByTimeAsync(1000)
    expect(autosave.status.value).toBe('saving')
    autosave.update(json('Second'), 0)
    finish({ updatedAt: '2026-12-01T10:08:00.000Z' })
    await vi.advanceTimersByTimeAsync(0)
    expect(autosave.status.value).toBe('pending')
    expect(readStoredWorkingCopy(key, storage)?.definition).toEqual(JSON.parse(json('Second')))
    await vi.advanceTimersByTimeAsync(1000)
    expect(save).toHaveBeenLastCalledWith(JSON.parse(json('Second')))
    expect(autosave.status.value).toBe('saved')
    autosave.dispose()
  })

  it('when the working copy is changed back to what the server has, then it counts as saved without a request', async () => {
    const save = vi.fn()
    const { autosave } = setup(save)
    autosave.update(json('Edited'), 0)
    autosave.update(json('Saved'), 0)
    await vi.advanceTimersByTimeAsync(2000)
    expect(save).not.toHaveBeenCalled()
    expect(autosave.status.value).toBe('saved')
    expect(readStoredWorkingCopy(key, storage)).toBeNull()
    autosave.dispose()
  })
})
