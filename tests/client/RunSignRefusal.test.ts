import { describe, expect, it } from 'vitest'
import { ApiError } from '@/api/http'
import { describeSignRefusal, MEANING_STATEMENTS } from '@/api/signoff'

describe('describeSignRefusal', () => {
  it('when the password is wrong, then the message goes on the password field, says nothing was signed, and the review is not reloaded', () => {
    const r = describeSignRefusal(new ApiError(400, 'wrong_password', 'The password is not correct, so nothing was signed', { password: 'Password is incorrect' }))
    expect(r.field).toBe('password')
    expect(r.fieldMessage).toBe('Password is incorrect: nothing was signed. Type it again.')
    expect(r.problem).toBeNull()
    expect(r.reload).toBe(false)
  })

  it('when the run changed since the review, then the review is loaded again and the signer is told to check it', () => {
    const r = describeSignRefusal(new ApiError(409, 'run_changed', 'The run changed after you opened the review; review it again, then sign', { snapshotSha256: 'The run changed since the review' }))
    expect(r.reload).toBe(true)
    expect(r.field).toBeNull()
    expect(r.problem?.type).toBe('warning')
    expect(r.problem?.title).toBe('The run changed after you opened the review.')
    expect(r.problem?.detail).toMatch(/loaded again/)
  })

  it('when the run is not ready, then every blocker the server named is listed', () => {
    const r = describeSignRefusal(
      new ApiError(409, 'not_ready', 'The run cannot be signed yet: Oil pressure has no value', { review: 'Oil pressure has no value; Oil temperature fails with no finding' }),
    )
    expect(r.reload).toBe(true)
    expect(r.problem?.items).toEqual(['Oil pressure has no value', 'Oil temperature fails with no finding'])
  })

  it('when the drawn signature is refused, then the message goes under the drawing', () => {
    const r = describeSignRefusal(new ApiError(400, 'invalid_signature_image', 'The drawn signature is empty or not a PNG image', { signatureImage: 'Draw your signature' }))
    expect(r.field).toBe('signatureImage')
    expect(r.fieldMessage).toBe('Draw your signature')
  })

  it('when the run was signed already or the role may not sign, then the server’s words are shown, reloading only for the first', () => {
    const signed = describeSignRefusal(new ApiError(409, 'already_signed', 'This run was accepted already'))
    expect(signed).toMatchObject({ reload: true, problem: { type: 'warning', title: 'This run was accepted already' } })
    const forbidden = describeSignRefusal(new ApiError(403, 'forbidden', "Only the owner's representative of this project accepts a run"))
    expect(forbidden).toMatchObject({ reload: false, problem: { type: 'error', title: 'You cannot sign this run.', detail: "Only the owner's representative of this project accepts a run" } })
  })

  it('when the server cannot be reached, then the connection message is shown as it is', () => {
    const r = describeSignRefusal(new ApiError(0, 'network', 'The server cannot be reached.'))
    expect(r).toEqual({ field: null, fieldMessage: null, reload: false, problem: { type: 'error', title: 'The server cannot be reached.' } })
  })
})

describe('MEANING_STATEMENTS', () => {
  it('when a signature is taken, then its meaning is stated in words for each of the two meanings', () => {
    expect(MEANING_STATEMENTS.performed_by).toBe('I performed this start-up and the readings are true.')
    expect(MEANING_STATEMENTS.accepted_by).toBe('I witnessed and accept this start-up on behalf of the owner.')
  })

  it('when the pad is blank, the signer performed the run, or the record changed since it was signed, then each refusal is said in its own words', () => {
    const blank = describeSignRefusal(new ApiError(400, 'blank_signature', 'The signature pad is blank: draw your signature (at least 0.2 % of the pad must carry ink; this drawing has 0.00 %)', { signatureImage: 'Draw your signature in the box, then sign' }))
    expect(blank).toMatchObject({ field: 'signatureImage', reload: false })
    expect(blank.fieldMessage).toMatch(/^The signature pad is blank/)
    const same = describeSignRefusal(new ApiError(409, 'same_person', 'The person who performed a start-up cannot also accept it'))
    expect(same.problem).toMatchObject({ type: 'error', title: 'You performed this start-up, so you cannot also accept it.' })
    expect(same.reload).toBe(false)
    expect(describeSignRefusal(new ApiError(409, 'snapshot_mismatch', 'x')).reload).toBe(true)
    const changed = describeSignRefusal(new ApiError(409, 'changed_since_signed', "The run is no longer what Ada Tech signed: the equipment's design point: evaporatorWaterFlow changed since."))
    expect(changed).toMatchObject({ reload: true, problem: { type: 'error', detail: expect.stringContaining('evaporatorWaterFlow') } })
  })
})
