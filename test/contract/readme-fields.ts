// The scenario field paths the README's tables document ("Scenario files" and the design block),
// read from the first column: `a.b`, `a.b`, `.c` (a leading dot continues the previous path's block).

export function readmeFieldPaths(readme: string): string[] {
  const paths: string[] = [];
  const sections = [sectionOf(readme, '## Scenario files'), designTable(readme)];
  for (const section of sections) {
    for (const line of section.split('\n')) {
      if (!line.startsWith('| `')) continue;
      const firstCell = line.split('|')[1] ?? '';
      let block = '';
      for (const match of firstCell.matchAll(/`([.A-Za-z][\w.]*)`/g)) {
        const name = match[1]!;
        const path = name.startsWith('.') ? `${block}${name}` : name;
        block = path.slice(0, path.lastIndexOf('.'));
        paths.push(path);
      }
    }
  }
  return [...new Set(paths)];
}

function sectionOf(readme: string, heading: string): string {
  const start = readme.indexOf(`\n${heading}\n`);
  if (start < 0) throw new Error(`README has no section ${heading}`);
  const end = readme.indexOf('\n## ', start + heading.length + 2);
  return readme.slice(start, end < 0 ? undefined : end);
}

function designTable(readme: string): string {
  const start = readme.indexOf('The `design` block of a scenario');
  if (start < 0) throw new Error('README has no design block table');
  const end = readme.indexOf('\n\n', readme.indexOf('|', start));
  return readme.slice(start, end);
}
