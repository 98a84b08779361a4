import { describe, expect, it } from 'vitest'
import { signupSchema } from '#shared/schemas/auth'
import { useFormSubmit } from '~/composables/useFormSubmit'

describe('useFormSubmit', () => {
  it('checks with the shared schema before sending and reports each field', () => {
    const form = useFormSubmit()
    expect(form.check(signupSchema, { organisation: 'Ok Org', name: '', email: 'bad', password: 'short' })).toBeNull()
    expect(form.errorFor('email')).toBe('Enter an e-mail address such as name@example.com.')
    expect(form.errorFor('password')).toBe('Use at least 10 characters.')
    expect(form.errorFor('organisation')).toBe('')
  })

  it('shows the server\'s field messages and its summary after a 422', async () => {
    const form = useFormSubmit()
    const answer = await form.run(() => Promise.reject({ statusCode: 422, data: { data: { message: 'Some fields need attention.', fieldErrors: { email: ['Taken.'] } } } }))
    expect(answer).toBeUndefined()
    expect(form.errorFor('email')).toBe('Taken.')
    expect(form.message.value).toBe('Some fields need attention.')
    expect(form.pending.value).toBe(false)
  })

  it('says the network is down when no answer came back', async () => {
    const form = useFormSubmit()
    await form.run(() => Promise.reject(new TypeError('fetch failed')))
    expect(form.message.value).toBe('No connection to the server. Check the network and try again.')
  })
})
