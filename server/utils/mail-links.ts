/** The web links in a mail's text part, in order, each once. */
export function linksIn(text: string): string[] {
  return [...new Set(text.match(/https?:\/\/[^\s<>"')]+/g) ?? [])]
}
