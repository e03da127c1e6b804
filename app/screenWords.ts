/**
 * The core's messages serve the command line and the app alike: they name a remedy in plain words and put the
 * command line's option for it in parentheses, e.g. "draw the sample-free area on the image (--sample-free
 * x,y,w,h)" or "(draw them on the image, or --walls)". On screen the options mean nothing, so they go: an
 * ", or --option ..." inside parentheses is cut, then every parenthesis still naming an option. Messages are
 * written to this rule (tests/app/screen-words.test.ts reads every message in src/ through it).
 */
export function screenWords(text: string): string {
  return text
    .replace(/,? or --[a-z][a-z-]*(?: "[^"]*"| [^\s,;()]+)*(?=\))/g, '')
    .replace(/ ?\([^()]*--[a-z][^()]*\)/g, '');
}
