export function workAreaNameTaken() {
  const message = 'A work area with this name exists already.'
  return createError({ statusCode: 409, message, data: { message, fieldErrors: { name: [message] } } })
}

export function isUniqueViolation(error: unknown): boolean {
  const text = `${(error as Error)?.message ?? ''} ${String((error as { cause?: unknown })?.cause ?? '')}`
  return text.includes('UNIQUE constraint failed')
}
