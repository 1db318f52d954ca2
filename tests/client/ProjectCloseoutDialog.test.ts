import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import type { CloseoutDocument } from '@shared/types/archive'
import { ApiError } from '@/api/http'

// Element Plus styles are plain CSS that the test environment does not load.
vi.mock('element-plus/es/components/base/style/css', () => ({}))
vi.mock('element-plus/es/components/dialog/style/css', () => ({}))
vi.mock('element-plus/es/components/form/style/css', () => ({}))
vi.mock('element-plus/es/components/form-item/style/css', () => ({}))
vi.mock('element-plus/es/components/input/style/css', () => ({}))
vi.mock('element-plus/es/components/select/style/css', () => ({}))
vi.mock('element-plus/es/components/option/style/css', () => ({}))
vi.mock('element-plus/es/components/date-picker/style/css', () => ({}))
vi.mock('element-plus/es/components/alert/style/css', () => ({}))
vi.mock('element-plus/es/components/button/style/css', () => ({}))
vi.mock('element-plus/es/components/message/style/css', () => ({}))

const api = vi.hoisted(() => ({ attach: vi.fn() }))
vi.mock('@/api/archive', async (importOriginal) => {
  const real = await importOriginal<typeof import('@/api/archive')>()
  return { ...real, closeoutApi: { ...real.closeoutApi, attach: api.attach } }
})

const { default: ProjectCloseoutDialog } = await import('@/components/ProjectCloseoutDialog.vue')

const PROJECT = '11111111-1111-4111-8111-111111111111'
const saved: CloseoutDocument = {
  id: 'doc-1', projectId: PROJECT, title: 'CH-1 warranty letter', category: 'warranty', documentDate: '2026-11-02', fileName: 'warranty.pdf',
  contentType: 'application/pdf', sizeBytes: 2048, sha256: 'cd'.repeat(32), uploadedById: 'u1', uploadedByName: 'Test Contractor',
  uploadedAt: '2026-11-20T10:00:00.000Z', downloadUrl: '/api/closeout-documents/doc-1/file',
}

let wrapper: VueWrapper
async function open() {
  wrapper = mount(ProjectCloseoutDialog, { props: { modelValue: false, projectId: PROJECT, projectCode: 'HSP-1', 'onUpdate:modelValue': (v: boolean) => wrapper.setProps({ modelValue: v }) }, attachTo: document.body })
  await wrapper.setProps({ modelValue: true })
  await flushPromises()
}
const field = (test: string) => document.querySelector(`[data-test=${test}]`) as HTMLElement
/** The message the dialog puts on a form item (Element Plus shows it under the field). */
const errorOf = (test: string) => (wrapper.findAllComponents({ name: 'ElFormItem' }).find((c) => c.attributes('data-test') === test)?.props('error') as string | undefined) ?? ''
async function typeTitle(text: string) {
  const input = document.querySelector('input[data-test=closeout-title]') as HTMLInputElement
  input.value = text
  input.dispatchEvent(new Event('input'))
  await flushPromises()
}
async function chooseCategory(value: string) {
  const select = wrapper.findComponent('[data-test=closeout-category]') as unknown as { vm: { $emit(e: string, v: string): void } }
  select.vm.$emit('update:modelValue', value)
  await flushPromises()
}
async function pickFile(file: File) {
  const input = document.querySelector('input[data-test=closeout-file]') as HTMLInputElement
  Object.defineProperty(input, 'files', { value: [file], configurable: true })
  input.dispatchEvent(new Event('change'))
  await flushPromises()
}
async function submit() {
  ;(document.querySelector('[data-test=closeout-submit]') as HTMLButtonElement).click()
  // vee-validate runs the yup schema asynchronously before the handler.
  for (let i = 0; i < 5; i++) {
    await new Promise((r) => setTimeout(r, 10))
    await flushPromises()
  }
}
const pdf = () => new File(['%PDF-1.4 test'], 'warranty.pdf', { type: 'application/pdf' })

beforeEach(() => api.attach.mockReset())
afterEach(() => {
  wrapper?.unmount()
  document.body.innerHTML = ''
})

describe('ProjectCloseoutDialog', () => {
  it('when Attach is pressed on an empty form, then every missing field says so in words and nothing is sent', async () => {
    await open()
    await submit()
    expect(errorOf('closeout-title-item')).toBe('Title is required')
    expect(errorOf('closeout-category-item')).toBe('Category is required')
    expect(errorOf('closeout-file-item')).toBe('Choose the file to attach')
    // The date starts as today, so it is not missing.
    expect(errorOf('closeout-date-item')).toBe('')
    expect(api.attach).not.toHaveBeenCalled()
  })

  it('when the file is of a kind the project does not keep, then the file field says which kinds it takes', async () => {
    await open()
    await typeTitle('Start-up photos')
    await chooseCategory('other')
    await pickFile(new File(['x'], 'photos.zip', { type: 'application/zip' }))
    expect(errorOf('closeout-file-item')).toBe('Attach a PDF, JPEG, PNG, WebP, Word (.docx) or Excel (.xlsx) file')
    await submit()
    expect(api.attach).not.toHaveBeenCalled()
  })

  it('when the fields are right, then title, category, date and file are sent and the attached document is handed back', async () => {
    api.attach.mockResolvedValue(saved)
    await open()
    await typeTitle('  CH-1 warranty letter ')
    await chooseCategory('warranty')
    const file = pdf()
    await pickFile(file)
    await submit()
    expect(api.attach).toHaveBeenCalledTimes(1)
    const [projectId, input, sent] = api.attach.mock.calls[0]
    expect(projectId).toBe(PROJECT)
    expect(input).toMatchObject({ title: 'CH-1 warranty letter', category: 'warranty' })
    expect(input.documentDate).toMatch(/^\d{4}-\d{2}-\d{2}$/)
    expect(sent).toBe(file)
    expect(wrapper.emitted('attached')?.[0]).toEqual([saved])
    expect(wrapper.emitted('update:modelValue')?.at(-1)).toEqual([false])
  })

  it('when the server refuses the upload, then its reasons stay on screen under their fields and what was entered is kept for another try', async () => {
    api.attach.mockRejectedValueOnce(new ApiError(400, 'invalid_input', 'documentDate must not be in the future', { documentDate: 'documentDate must not be in the future' }))
    await open()
    await typeTitle('Refrigerant leak test certificate')
    await chooseCategory('test_certificate')
    await pickFile(pdf())
    await submit()
    expect(errorOf('closeout-date-item')).toBe('Document date must not be in the future')
    expect(field('closeout-problem').textContent).toContain('Nothing was attached: Document date must not be in the future')
    expect((document.querySelector('input[data-test=closeout-title]') as HTMLInputElement).value).toBe('Refrigerant leak test certificate')
    expect(field('closeout-file-name').textContent).toContain('warranty.pdf')

    // Too large: the 413's words go on the file, the rest of the form is still there.
    api.attach.mockRejectedValueOnce(new ApiError(413, 'file_too_large', 'The file is larger than 25 MB'))
    await submit()
    expect(errorOf('closeout-file-item')).toBe('The file is larger than 25 MB')
    expect((document.querySelector('input[data-test=closeout-title]') as HTMLInputElement).value).toBe('Refrigerant leak test certificate')

    // Closed and opened again after a refusal: still filled in.
    await wrapper.setProps({ modelValue: false })
    await wrapper.setProps({ modelValue: true })
    await flushPromises()
    expect((document.querySelector('input[data-test=closeout-title]') as HTMLInputElement).value).toBe('Refrigerant leak test certificate')
  })

  it('when a document was attached, then the form opens empty the next time', async () => {
    api.attach.mockResolvedValue(saved)
    await open()
    await typeTitle('CH-1 warranty letter')
    await chooseCategory('warranty')
    await pickFile(pdf())
    await submit()
    await wrapper.setProps({ modelValue: true })
    await flushPromises()
    expect((document.querySelector('input[data-test=closeout-title]') as HTMLInputElement).value).toBe('')
    expect(field('closeout-file-name').textContent).toContain('No file chosen')
  })
})
