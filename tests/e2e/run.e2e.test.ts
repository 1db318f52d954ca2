import { fieldPlaces, hasCriterion } from '@shared/record'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { HTTPRequest, Page } from 'puppeteer-core'
import { chillerStartupDefinition } from '../../shared/library/chiller'
import type { ChecklistField } from '../../shared/schemas/checklist'
import type { RunDetail, RunReview } from '../../shared/types/run'
import { demoPerson, freshPage, signIn, startProduct, type RunningProduct } from '../helpers/product'

let product: RunningProduct

beforeAll(async () => {
  product = await startProduct('startproof_e2e_run')
}, 120_000)

afterAll(() => product?.stop())

// Readings for CH-1 (500 tons, 54 → 44 °F, 1200 gpm; condenser 85 → 94.3 °F, 1500 gpm; 460 V, 420 A; oil setpoint
// 35 psid; R-134a). Every value passes except the running oil pressure (28 psid is more than 15 % below the setpoint:
// fail) and the oil temperature (155 °F is above the 150 °F warning level: marginal).
const NUMBERS: Record<string, number> = {
  chwPressureDrop: 18.5, cwPressureDrop: 16.2, oilHeaterHours: 26,
  oilPressureAtDriveStart: 38,
  voltsAB: 461, voltsBC: 459, voltsCA: 462, ampsA: 398, ampsB: 402, ampsC: 400, inputKw: 284, loadAmpsPct: 95,
  oilPressureRunning: 28, oilTempRunning: 155,
  chwEntering: 54, chwLeaving: 44, chwFlow: 1200, evapPressure: 38,
  cwEntering: 85, cwLeaving: 94.3, cwFlow: 1500, condPressure: 118,
  chwSetpoint: 44,
  lowEvapSetting: 34, lowEvapTestSetting: 38, lowEvapTripValue: 38.2,
  highCondSetting: 160, highCondTripValue: 161, lowOilSetting: 15, lowOilTripValue: 15.2,
  trainingHours: 2,
}
// The pre-lubrication time is not typed: it is the drive start marked on the oil-pressure capture (40 s).
const TIMERS: Record<string, number> = { chwFlowLossTime: 3, cwFlowLossTime: 4 }
// Oil pressure from the pump start: over the 35 psid setpoint at about 15 s, held to the drive start at 40 s.
const RAMP: Array<[number, number]> = [[0, 0], [6, 14], [12, 30], [16, 36], [30, 38], [40, 38]]
const TEXTS: Record<string, string> = {
  safetyTestNotes: 'All trips as set; settings restored and checked by a second person.',
  trainingTopics: 'Starting and stopping, alarms, safeties, daily log, standby lubrication, seasonal shutdown.',
  trainingAttendees: 'Two plant operators and the facilities supervisor',
  trainingGivenBy: 'Start-up technician',
  handoverNotes: 'Tube brushing booked for next spring.',
}
// Readings typed with no connection, across a reload.
const OFFLINE_FIELDS = ['cwEntering', 'cwLeaving', 'cwFlow']
const AFTER_RELOAD_FIELD = 'condPressure'

// A 2×2 PNG for the attendance-sheet photo.
const PNG = Buffer.from(
  'iVBORw0KGgoAAAANSUhEUgAAAAIAAAACCAIAAAD91JpzAAAAFklEQVR4nGP8z8DAwMDAxMDAwMDAAAANHQEDasKb6QAAAABJRU5ErkJggg==',
  'base64',
)

const sel = (test: string) => `[data-test="${test}"]`

async function typeInto(page: Page, selector: string, text: string) {
  await page.waitForSelector(selector, { visible: true })
  await page.click(selector, { count: 3 })
  await page.keyboard.press('Backspace')
  await page.type(selector, text)
}

async function inputValue(page: Page, selector: string) {
  return page.$eval(selector, (el) => (el as HTMLInputElement).value)
}

async function waitForSaved(page: Page) {
  await page.waitForFunction(() => document.querySelector('[data-test=run-save-state]')?.getAttribute('data-tone') === 'saved', { timeout: 20_000 })
}

async function fillField(page: Page, field: ChecklistField) {
  const id = field.id
  if (field.computed) return
  switch (field.kind) {
    case 'yes_no':
      await page.click(sel(`yes-${id}`))
      return
    case 'choice': {
      const pass = field.rule?.type === 'choice' ? field.rule.pass[0] : field.choices![0].value
      await page.click(sel(`choice-${id}-${pass}`))
      return
    }
    case 'text':
      await typeInto(page, `textarea${sel(`input-${id}`)}`, TEXTS[id])
      return
    case 'number':
      // An optional reading the script has no value for (the site's barometric pressure on the day) stays blank.
      if (NUMBERS[id] === undefined && field.required === false) return
      if (id === 'chwFlow') {
        // A flow below zero is refused by the server: the typed value stays and its message shows beside the field.
        await typeInto(page, `input${sel(`input-${id}`)}`, '-10')
        await page.waitForSelector(sel(`field-error-${id}`), { timeout: 15_000 })
        expect(await page.$eval(sel(`field-error-${id}`), (el) => el.textContent)).toMatch(/negative/i)
        expect(await inputValue(page, `input${sel(`input-${id}`)}`)).toBe('-10')
      }
      await typeInto(page, `input${sel(`input-${id}`)}`, String(NUMBERS[id]))
      return
    case 'timer':
      if (field.fromDriveStart) {
        // One timing: the capture above marked the drive start, so the timer shows that time and asks for nothing.
        await page.waitForSelector(`${sel(`timer-${id}`)} ${sel('timer-taken-from')}`)
        expect(await page.$(`${sel(`timer-${id}`)} ${sel('timer-input')}`)).toBeNull()
        return
      }
      if (id === 'starterRampTime') {
        // The tap path: start command, then full speed a few seconds later.
        await page.click(`${sel(`starter-${id}`)} ${sel('starter-tap')}`)
        await new Promise((r) => setTimeout(r, 3600))
        await page.click(`${sel(`starter-${id}`)} ${sel('starter-tap')}`)
        return
      }
      await typeInto(page, `${sel(`timer-${id}`)} ${sel('timer-input')}`, String(TIMERS[id]))
      await page.$eval(`${sel(`timer-${id}`)} ${sel('timer-input')}`, (el) => (el as HTMLInputElement).blur())
      return
    case 'time_series': {
      // The manual path for the long ramp: the proving hold alone is 20 s.
      const root = sel(`ramp-${id}`)
      for (let i = 0; i < RAMP.length; i++) {
        if (!(await page.$(`${root} ${sel(`ramp-row-t-${i}`)}`))) await page.click(`${root} ${sel('ramp-add-row')}`)
        await typeInto(page, `${root} ${sel(`ramp-row-t-${i}`)}`, String(RAMP[i][0]))
        await typeInto(page, `${root} ${sel(`ramp-row-p-${i}`)}`, String(RAMP[i][1]))
      }
      await typeInto(page, `${root} ${sel('ramp-drive-input')}`, '40')
      return
    }
    case 'photo': {
      const file = path.join(os.tmpdir(), 'startproof-e2e-attendance.png')
      fs.writeFileSync(file, PNG)
      const input = await page.waitForSelector(sel(`photo-input-${id}`))
      await (input as unknown as { uploadFile(p: string): Promise<void> }).uploadFile(file)
      await page.waitForSelector(`${sel(`field-${id}`)} ${sel('photo-thumb')}`, { timeout: 15_000 })
      return
    }
  }
}

describe('a technician runs the chiller start-up', { timeout: 180_000 }, () => {
  it('when every step is filled, with a reload while offline, then every reading is on the server with its verdict', async () => {
    const started = Date.now()
    const page = await freshPage(product)
    const tech = demoPerson('technician')
    await signIn(product, page, tech.email, tech.password)
    await page.waitForSelector(sel('my-runs'))

    const equipmentId = await page.evaluate(async () => {
      const { projects } = await (await fetch('/api/projects')).json()
      const project = projects.find((p: { code: string }) => p.code === 'VXH-CUP')
      const { equipment } = await (await fetch(`/api/projects/${project.id}/equipment`)).json()
      return equipment.find((e: { tag: string }) => e.tag === 'CH-1').id as string
    })
    await page.goto(`${product.base}/equipment/${equipmentId}`, { waitUntil: 'networkidle0' })
    await page.click(sel('start-run'))
    await page.waitForSelector(`${sel('confirm-start-run')}:not([disabled])`, { visible: true })
    await page.click(sel('confirm-start-run'))
    await page.waitForFunction(() => /^\/runs\/[0-9a-f-]{36}$/.test(location.pathname))
    const runId = new URL(page.url()).pathname.split('/')[2]

    const abortApi = (req: HTTPRequest) => (new URL(req.url()).pathname.startsWith('/api/') ? req.abort('internetdisconnected') : req.continue())
    const steps = chillerStartupDefinition.sections.flatMap((s) => s.steps)
    for (const [i, step] of steps.entries()) {
      await page.waitForSelector(sel(`step-${step.id}`))
      if (step.cautions?.length) await page.click(sel('acknowledge-cautions'))

      if (step.id === 'condenser') {
        // No connection: the readings are kept on the device, and survive a reload.
        await page.setRequestInterception(true)
        page.on('request', abortApi)
        for (const id of OFFLINE_FIELDS) await typeInto(page, `input${sel(`input-${id}`)}`, String(NUMBERS[id]))
        await page.waitForFunction(() => /Offline — 3 changes kept on this device/.test(document.querySelector('[data-test=run-save-label]')?.textContent ?? ''), { timeout: 15_000 })
        await page.reload({ waitUntil: 'domcontentloaded' })
        await page.waitForSelector(`input${sel(`input-${OFFLINE_FIELDS[0]}`)}`)
        await page.waitForFunction(
          (ids: string[], values: number[]) => ids.every((id, k) => (document.querySelector(`input[data-test="input-${id}"]`) as HTMLInputElement | null)?.value === String(values[k])),
          { timeout: 15_000 },
          OFFLINE_FIELDS,
          OFFLINE_FIELDS.map((id) => NUMBERS[id]),
        )
        await typeInto(page, `input${sel(`input-${AFTER_RELOAD_FIELD}`)}`, String(NUMBERS[AFTER_RELOAD_FIELD]))
        await page.waitForFunction(() => /Offline — 4 changes kept on this device/.test(document.querySelector('[data-test=run-save-label]')?.textContent ?? ''), { timeout: 15_000 })
        // Back online: the kept changes go out in order.
        page.off('request', abortApi)
        await page.setRequestInterception(false)
        await page.click(sel('run-save-retry'))
        await waitForSaved(page)
        for (const field of step.fields) if (!OFFLINE_FIELDS.includes(field.id) && field.id !== AFTER_RELOAD_FIELD) await fillField(page, field)
      } else {
        for (const field of step.fields) await fillField(page, field)
      }

      if (step.id === 'oil-running') {
        await page.waitForSelector(`${sel('verdict-oilPressureRunning')}[data-verdict=fail]`)
        await page.waitForSelector(`${sel('verdict-oilTempRunning')}[data-verdict=marginal]`)
        await page.click(sel('record-finding-oilPressureRunning'))
        await typeInto(page, `textarea${sel('finding-description')}`, 'Running oil pressure 28 psid, below the setpoint band; oil filter differential to be checked.')
        await page.click(sel('save-finding'))
        await page.waitForSelector(`${sel(`step-${step.id}`)} ${sel('finding-list')}`)
        await page.waitForSelector('.el-overlay-dialog', { hidden: true })
      }
      if (i < steps.length - 1) {
        await waitForSaved(page)
        await page.click(sel('next-step'))
      }
    }
    await waitForSaved(page)

    await page.click(sel('finish-review'))
    await page.waitForSelector(sel('review-counts'))
    await page.waitForSelector(sel('review-can-sign'))
    await page.waitForSelector(`${sel('sign-performer')}:not([disabled])`)

    const { run, review } = await page.evaluate(async (id: string) => {
      const run = (await (await fetch(`/api/runs/${id}`)).json()).run
      const review = (await (await fetch(`/api/runs/${id}/review`)).json()).review
      return { run, review } as { run: RunDetail; review: RunReview }
    }, runId)

    for (const [id, value] of Object.entries(NUMBERS)) expect(run.readings[id].entry, id).toEqual({ value, unit: chillerStartupDefinition.sections.flatMap((s) => s.steps).flatMap((s) => s.fields).find((f) => f.id === id)!.unit })
    for (const [id, value] of Object.entries(TIMERS)) expect(run.readings[id].entry, id).toEqual({ value, unit: 's' })
    for (const [id, value] of Object.entries(TEXTS)) expect(run.readings[id].entry, id).toEqual({ value })
    expect(run.readings.oilPressureRamp.entry).toEqual({ value: RAMP, unit: 'psid', driveStartS: 40 })
    expect(run.readings.prelubeTime.evaluation.display?.value).toBe(40)
    expect(run.readings.prelubeTime.evaluation.takenFrom).toBe('Oil pressure from the oil pump start')
    const starter = run.readings.starterRampTime.entry as { value: number; unit: string }
    expect(starter.value).toBeGreaterThan(3)
    expect(starter.value).toBeLessThan(8)
    expect((run.readings.attendanceSheet.entry as { value: string[] }).value).toHaveLength(1)

    expect(run.readings.oilPressureRunning.evaluation.verdict).toBe('fail')
    expect(run.readings.oilTempRunning.evaluation.verdict).toBe('marginal')
    // Every other judged field passes; values with no acceptance criterion are recorded, never passed.
    const judged = (id: string) => hasCriterion(fieldPlaces(run.definition).get(id)!.field)
    const others = Object.values(run.readings).filter((r) => r.fieldId !== 'oilPressureRunning' && r.fieldId !== 'oilTempRunning' && r.evaluation.verdict !== (judged(r.fieldId) ? 'pass' : 'recorded') && !(r.evaluation.verdict === 'incomplete' && !r.evaluation.required))
    expect(others.map((r) => `${r.fieldId}: ${r.evaluation.verdict}`)).toEqual([])
    expect(review.counts.recorded).toBe(Object.values(run.readings).filter((r) => r.evaluation.verdict === 'recorded').length)
    expect(run.findings).toHaveLength(1)
    expect(run.findings[0].fieldId).toBe('oilPressureRunning')

    expect(review.counts.fail).toBe(1)
    expect(review.counts.marginal).toBe(1)
    expect(review.missingRequired).toEqual([])
    expect(review.canSign).toBe(true)
    expect(Date.now() - started).toBeLessThan(150_000)
    await page.browserContext().close()
  })
})
