import { describe, expect, it } from 'vitest'
import { mountSuspended } from '@nuxt/test-utils/runtime'
import FormField from '~/components/Form/FormField.vue'
import FormMessage from '~/components/Form/FormMessage.vue'

describe('FormField', () => {
  it('links the label, the hint and the error to the input for screen readers', async () => {
    const wrapper = await mountSuspended(FormField, { props: { label: 'E-mail address', name: 'email', hint: 'Your work address.', error: 'Enter an e-mail address.' } })
    const input = wrapper.get('input')
    const label = wrapper.get('label')
    expect(label.attributes('for')).toBe(input.attributes('id'))
    expect(input.attributes('aria-invalid')).toBe('true')
    const described = input.attributes('aria-describedby')!.split(' ')
    expect(described).toHaveLength(2)
    expect(wrapper.get(`#${described[1]}`).text()).toContain('Enter an e-mail address.')
    expect(wrapper.get('[role="alert"]').text()).toContain('Enter an e-mail address.')
  })

  it('has no error state when there is no error', async () => {
    const wrapper = await mountSuspended(FormField, { props: { label: 'Name', name: 'name' } })
    expect(wrapper.get('input').attributes('aria-invalid')).toBeUndefined()
    expect(wrapper.find('[role="alert"]').exists()).toBe(false)
  })
})

describe('FormMessage', () => {
  it('says in words whether it is a problem or done, not by colour alone', async () => {
    const problem = await mountSuspended(FormMessage, { props: { text: 'Try again.' } })
    expect(problem.text()).toBe('Problem: Try again.')
    const done = await mountSuspended(FormMessage, { props: { text: 'Saved.', tone: 'done' } })
    expect(done.text()).toBe('Done: Saved.')
  })
})
