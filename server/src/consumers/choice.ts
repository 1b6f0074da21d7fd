/** The project file's consumer and dialect choice for a path (its `consumers:` setting). */
import { isAbsolute, relative, resolve, sep } from 'node:path';
import picomatch from 'picomatch';
import type { ConsumerChoice } from './decide';
import type { ConsumerSetting } from './types';

export interface ConsumerSettings {
  root: string;
  consumers?: ConsumerSetting[];
}

/** The project's consumer and dialect choice for a file (first matching `consumers` entry). */
export function consumerChoiceFor(project: ConsumerSettings | undefined, path: string): ConsumerChoice | undefined {
  const list = project?.consumers;
  if (!list || list.length === 0) return undefined;
  const abs = resolve(path);
  const rel = relative(project.root, abs).split(sep).join('/');
  if (rel.startsWith('..') || isAbsolute(rel)) return undefined;
  for (const setting of list) {
    for (const glob of setting.files) {
      if (!picomatch.isMatch(rel, glob, { dot: true })) continue;
      const choice: ConsumerChoice = { glob };
      if (setting.consumer) choice.family = setting.consumer;
      if (setting.class) choice.className = setting.class;
      if (setting.dialect) choice.dialect = setting.dialect;
      return choice;
    }
  }
  return undefined;
}
