/**
 * A line split into words as a POSIX shell splits it (POSIX.1-2017, Shell Command Language 2.2 and 2.6.5): blanks
 * separate words; inside double quotes a backslash escapes only $ ` " \ and newline; inside single quotes nothing.
 */
export function shellWords(line: string): string[] {
  const words: string[] = [];
  let word: string | null = null;
  for (let i = 0; i < line.length; i++) {
    const c = line[i];
    if (c === ' ' || c === '\t') { if (word !== null) words.push(word); word = null; continue; }
    word ??= '';
    if (c === "'") { const end = line.indexOf("'", i + 1); word += line.slice(i + 1, end); i = end; continue; }
    if (c === '"') {
      for (i++; line[i] !== '"'; i++) {
        if (line[i] === '\\' && '$`"\\\n'.includes(line[i + 1])) i++;
        word += line[i];
      }
      continue;
    }
    if (c === '\\') { word += line[++i]; continue; }
    word += c;
  }
  if (word !== null) words.push(word);
  return words;
}
