/** The tone and meaning of each region role, for its badge. */
export const ROLE_TONE = { signal: 'plum', control: 'teal', validation: 'neutral' } as const;
export const ROLE_MEANING = {
  signal: 'Signal region: where the signal is expected; its data are withheld while the analysis is blinded',
  control: 'Control region: constrains backgrounds and nuisance parameters',
  validation: 'Validation region: checks the model; not used to constrain it',
} as const;
