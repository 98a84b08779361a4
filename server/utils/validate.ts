// Input validation in one shape for every route: unparseable JSON is a 400,
// a body or params that break the resource's zod schema are a 422 whose
// `data.fieldErrors` the forms show beside each field.
import type { H3Event } from 'h3'
import type { z } from 'zod'
import { personMessage } from '../../shared/utils/zod-messages'

export function fieldErrorsOf(error: z.ZodError): Record<string, string[]> {
  const fieldErrors: Record<string, string[]> = {}
  for (const issue of error.issues) {
    const key = issue.path.length ? issue.path.join('.') : '_form'
    ;(fieldErrors[key] ??= []).push(issue.message)
  }
  return fieldErrors
}

export function invalidInput(error: z.ZodError, message = 'Some fields need attention.') {
  return createError({ statusCode: 422, statusMessage: 'Unprocessable Entity', message, data: { message, fieldErrors: fieldErrorsOf(error) } })
}

export async function readValid<S extends z.ZodType>(event: H3Event, schema: S): Promise<z.output<S>> {
  let body: unknown
  try {
    body = await readBody(event)
  }
  catch (error) {
    if (isError(error) && error.statusCode === 413) throw error
    throw createError({ statusCode: 400, statusMessage: 'Bad Request', message: 'The request body is not valid JSON.', data: { message: 'The request body is not valid JSON.' } })
  }
  if (body === undefined || body === null || typeof body !== 'object') {
    throw createError({ statusCode: 400, statusMessage: 'Bad Request', message: 'Send a JSON object in the request body.', data: { message: 'Send a JSON object in the request body.' } })
  }
  const result = schema.safeParse(body, { error: personMessage })
  if (!result.success) throw invalidInput(result.error)
  return result.data
}

export async function paramsValid<S extends z.ZodType>(event: H3Event, schema: S): Promise<z.output<S>> {
  const result = schema.safeParse(getRouterParams(event, { decode: true }))
  // A malformed id cannot name a row of anyone's: answer as for a missing row.
  if (!result.success) throw notFound()
  return result.data
}

export function queryValid<S extends z.ZodType>(event: H3Event, schema: S): z.output<S> {
  const result = schema.safeParse(getQuery(event), { error: personMessage })
  if (!result.success) throw invalidInput(result.error, 'Some query parameters are not valid.')
  return result.data
}

/**
 * An error a person reads: the message travels in `data.message` (and, with a field, in
 * `data.fieldErrors[field]`) so the forms can show it above the button or beside the field.
 */
export function problem(statusCode: number, message: string, field?: string) {
  return createError({ statusCode, message, data: { message, ...(field ? { fieldErrors: { [field]: [message] } } : {}) } })
}

export function notFound(what = 'That item') {
  return problem(404, `${what} was not found in your organisation.`)
}

export function conflict(message: string) {
  return problem(409, message)
}

export function forbidden(message: string) {
  return problem(403, message)
}

export function badRequest(message: string, statusCode = 400) {
  return problem(statusCode, message)
}
