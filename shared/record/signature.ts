import type { SignatureMeaning, SignatureRecord } from '../types/signature'

export const MEANING_LABELS: Record<SignatureMeaning, string> = { performed_by: 'Performed by', accepted_by: 'Accepted by' }

/** "2026-12-01 16:42 CST" in the project's zone. */
export function localTime(date: Date, timeZone: string): string {
  const parts = new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', hourCycle: 'h23', timeZoneName: 'short' }).formatToParts(date)
  const get = (t: string) => parts.find((p) => p.type === t)?.value ?? ''
  return `${get('year')}-${get('month')}-${get('day')} ${get('hour')}:${get('minute')} ${get('timeZoneName')}`
}

/** A stored signature as the database keeps it. */
export interface SignatureRow {
  id: string
  meaning: SignatureMeaning
  signerId: string
  printedName: string
  role: string
  signedAt: Date
  timeZone: string
  imageDataUrl: string
  snapshotSha256: string
  acknowledgedExceptions?: string[] | null
  voided: boolean
  voidedAt: Date | null
  voidReason: string | null
}

/** A signature as every screen, report and package shows it: who, in which role, when (UTC and the site's time), what. */
export function signatureRecord(s: SignatureRow): SignatureRecord {
  return {
    id: s.id,
    meaning: s.meaning,
    meaningLabel: MEANING_LABELS[s.meaning],
    signerId: s.signerId,
    printedName: s.printedName,
    role: s.role,
    signedAtUtc: s.signedAt.toISOString(),
    signedAtLocal: localTime(s.signedAt, s.timeZone),
    timeZone: s.timeZone,
    imageDataUrl: s.imageDataUrl,
    snapshotSha256: s.snapshotSha256,
    acknowledgedExceptions: s.acknowledgedExceptions ?? null,
    voided: s.voided,
    voidedAt: s.voidedAt?.toISOString() ?? null,
    voidReason: s.voidReason,
  }
}

/**
 * A drawn signature must contain ink: at least this share of the pad's pixels drawn (opaque and darker than the
 * paper). One pixel in 500 is far below any real signature, even initials, and far above a blank or near-blank pad.
 */
export const MIN_INK_SHARE = 0.002

/** The share of pixels that carry ink in an RGBA image (alpha at least half, and not near-white paper). */
export function inkShare(rgba: Uint8Array | Uint8ClampedArray, width: number, height: number): number {
  const total = width * height
  if (!total) return 0
  let ink = 0
  for (let i = 0; i < total; i++) {
    const o = i * 4
    const alpha = rgba[o + 3]
    if (alpha < 128) continue
    if (Math.max(rgba[o], rgba[o + 1], rgba[o + 2]) >= 230) continue
    ink += 1
  }
  return ink / total
}

/** Why two people must sign: the words the refusal gives. */
export const SEPARATION_OF_DUTIES =
  'The person who performed a start-up cannot also accept it: acceptance must come from a different person, whatever their role is now'

/**
 * What the performer's signature states. Work recorded as done by others is named, so nobody signs "I performed"
 * for a first start the manufacturer's engineer made.
 */
export function performerStatement(byOthers: ReadonlyArray<{ by: string; reference: string | null; where: string[] }>): string {
  if (!byOthers.length) return 'I performed this start-up and the readings are true.'
  const who = byOthers.map((g) => `${g.where.join('; ')} by ${g.by}${g.reference ? ` (their record ${g.reference})` : ''}`).join('; ')
  return `I performed this start-up and the readings are true, except the items recorded as done by others: ${who}.`
}

/** What the acceptor's signature states, with the exceptions acknowledged. */
export function acceptorStatement(exceptions: number): string {
  if (!exceptions) return 'I witnessed and accept this start-up on behalf of the owner.'
  return `I witnessed and accept this start-up on behalf of the owner, with the ${exceptions} exception${exceptions === 1 ? '' : 's'} listed, each acknowledged.`
}
