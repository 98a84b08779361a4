// Photo uploads from tests: a multipart form with one `file` part, and a tiny real PNG
// (8 × 6, made with sharp) for tests that only need a valid photo.
export const TINY_PNG = Buffer.from('iVBORw0KGgoAAAANSUhEUgAAAAgAAAAGCAIAAABxZ0isAAAACXBIWXMAAAPoAAAD6AG1e1JrAAAAEUlEQVQImWOQt4rHihgGUgIAEKwigfoh70EAAAAASUVORK5CYII=', 'base64')

/** The form a browser sends for `<input type="file" name="file">`, with the name and type the sender claims. */
export function photoForm(bytes: Uint8Array = TINY_PNG, filename = 'photo.png', type = 'image/png'): FormData {
  const form = new FormData()
  form.append('file', new Blob([new Uint8Array(bytes)], { type }), filename)
  return form
}
