// `--engine exec:COMMAND ARGS…`: which program to start as an engine, split into words the
// way a POSIX shell splits a simple command, without starting a shell.
//
// Why no shell: the program is then jetlag's own child, so its exit status and the signal
// that killed it are its own (a shell in between turns a crash into status 139), and killing
// it on a timeout kills the program, not a shell that leaves it running. A user who wants
// pipes or variables writes them out: exec:sh -c 'my-clusterer --fast | tee log'.
//
// API
//   execCommandOf(engineText): string | null      the text after "exec:", null for other engines
//   splitCommand(text, commandName): string[]      words; UsageError on unbalanced quotes,
//                                                  an empty command, or a shell feature
//
// Quoting: '…' takes everything literally; "…" takes everything but \" \\ \$ \` literally
// (the backslash is dropped before those four); outside quotes a backslash takes the next
// character literally. Unquoted | & ; < > ( ) $ ` and a $ or ` inside "…" are shell features.

import { UsageError } from '../errors.js';

export const EXEC_PREFIX = 'exec:';

export function execCommandOf(engineText: string): string | null {
  return engineText.startsWith(EXEC_PREFIX) ? engineText.slice(EXEC_PREFIX.length) : null;
}

const SHELL_FEATURES = '|&;<>()$`';

export function splitCommand(text: string, commandName: string): string[] {
  const words: string[] = [];
  let word = '';
  let inWord = false;
  const shellFeature = (character: string): never => {
    throw new UsageError(`${commandName}: --engine exec: runs a program without a shell, and ${JSON.stringify(character)} is a shell feature; write exec:sh -c '…' to use a shell`);
  };
  let pos = 0;
  while (pos < text.length) {
    const character = text[pos];
    if (character === ' ' || character === '\t' || character === '\n') {
      if (inWord) { words.push(word); word = ''; inWord = false; }
      pos++;
      continue;
    }
    inWord = true;
    if (character === "'") {
      const close = text.indexOf("'", pos + 1);
      if (close < 0) throw new UsageError(`${commandName}: --engine exec: the command has an unclosed ' quote`);
      word += text.slice(pos + 1, close);
      pos = close + 1;
    } else if (character === '"') {
      pos++;
      while (true) {
        if (pos >= text.length) throw new UsageError(`${commandName}: --engine exec: the command has an unclosed " quote`);
        const inner = text[pos];
        if (inner === '"') { pos++; break; }
        if (inner === '$' || inner === '`') shellFeature(inner);
        if (inner === '\\' && pos + 1 < text.length && '"\\$`'.includes(text[pos + 1])) {
          word += text[pos + 1];
          pos += 2;
        } else {
          word += inner;
          pos++;
        }
      }
    } else if (character === '\\') {
      if (pos + 1 >= text.length) throw new UsageError(`${commandName}: --engine exec: the command ends in a lone backslash`);
      word += text[pos + 1];
      pos += 2;
    } else {
      if (SHELL_FEATURES.includes(character)) shellFeature(character);
      word += character;
      pos++;
    }
  }
  if (inWord) words.push(word);
  if (words.length === 0) throw new UsageError(`${commandName}: --engine exec: needs a command, e.g. exec:'./my-clusterer --fast'`);
  return words;
}
