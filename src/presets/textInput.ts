/**
 * Text as files arrive: some editors (notably on Windows) start a UTF-8 file with a byte-order mark
 * (U+FEFF). It carries no content, JSON.parse refuses it, and in a message it is invisible, so it is
 * stripped before parsing. Only a leading one: anywhere else it is part of the content.
 */
export const BYTE_ORDER_MARK = '\uFEFF';

export function stripByteOrderMark(text: string): string {
  return text.startsWith(BYTE_ORDER_MARK) ? text.slice(1) : text;
}
