/** Escapes LIKE's wildcards (and the escape character) for a pattern written with `escape '\'`. */
export function escapeLike(s: string): string {
  return s.replace(/[\\%_]/g, (m) => `\\${m}`);
}
