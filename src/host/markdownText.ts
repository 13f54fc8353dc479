// User text (model and parameter names from a spec) placed in hover Markdown: every Markdown and theme-icon special
// character backslash-escaped, control characters and newlines shown as spaces, so a name cannot add links, images,
// HTML or icons, or break out of its line. Pure (no vscode import), unit-tested.

export function escapeMarkdown(text: string, max = 200): string {
  const short = text.length > max ? text.slice(0, max) + '…' : text;
  return short.replace(/[\u0000-\u001f\u007f-\u009f]/g, ' ').replace(/[\\`*_{}[\]()#+\-.!|<>~$&:]/g, c => '\\' + c);
}
