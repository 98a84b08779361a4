// One way for every form to validate with the resource's shared zod schema, submit,
// and show the server's answer: field messages beside the fields, the rest above the button.
import type { z } from 'zod'

interface ServerError { data?: { message?: string, data?: { message?: string, fieldErrors?: Record<string, string[]> } }, statusCode?: number }

export function useFormSubmit() {
  const pending = ref(false)
  const fieldErrors = ref<Record<string, string[]>>({})
  const message = ref('')

  function check<S extends z.ZodType>(schema: S, values: unknown): z.output<S> | null {
    const result = schema.safeParse(values)
    if (result.success) return result.data
    const errors: Record<string, string[]> = {}
    for (const issue of result.error.issues) (errors[issue.path.join('.') || '_form'] ??= []).push(issue.message)
    fieldErrors.value = errors
    message.value = 'Some fields need attention.'
    return null
  }

  async function run<T>(work: () => Promise<T>): Promise<T | undefined> {
    pending.value = true
    fieldErrors.value = {}
    message.value = ''
    try {
      return await work()
    }
    catch (error) {
      const e = error as ServerError
      fieldErrors.value = e.data?.data?.fieldErrors ?? {}
      message.value = e.data?.data?.message ?? e.data?.message
        ?? (e.statusCode ? 'Something went wrong. Try again.' : 'No connection to the server. Check the network and try again.')
      return undefined
    }
    finally {
      pending.value = false
    }
  }

  const errorFor = (field: string) => fieldErrors.value[field]?.join(' ') ?? ''

  return { pending, fieldErrors, message, check, run, errorFor }
}
