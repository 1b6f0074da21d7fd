/**
 * Whether the text report is coloured: the explicit option first, then the environment's
 * conventions (FORCE_COLOR turns colour on, NO_COLOR turns it off; an empty value or FORCE_COLOR=0
 * counts as unset or off), then whether stdout is a terminal other than TERM=dumb.
 */
import type { CliIO } from './io';
import type { OptionSpec } from './options';

export const COLOR_CHOICES = ['auto', 'always', 'never'] as const;
export type ColorChoice = (typeof COLOR_CHOICES)[number];

export const COLOR_OPTION: OptionSpec = {
  name: 'color',
  type: 'string',
  value: 'auto|always|never',
  choices: COLOR_CHOICES,
  description: 'Colour the text report (default auto: a terminal, unless NO_COLOR; FORCE_COLOR forces it).',
};

export function useColor(choice: ColorChoice | undefined, io: Pick<CliIO, 'isTTY' | 'env'>): boolean {
  if (choice === 'always') return true;
  if (choice === 'never') return false;
  const force = io.env.FORCE_COLOR;
  if (force !== undefined && force !== '') return !['0', 'false'].includes(force.toLowerCase());
  if (io.env.NO_COLOR !== undefined && io.env.NO_COLOR !== '') return false;
  return io.isTTY && io.env.TERM !== 'dumb';
}
