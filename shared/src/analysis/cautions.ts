/** Cautions carried by every result: the product defers to local protocol and licensed practice (common practice). */
export const CAUTIONS: readonly string[] = [
  'Decision support for trained clinicians only: Ebbgate does not diagnose and does not order fluid.',
  'A large respiratory variation does not by itself mean fluid should be given: a patient who is not hypotensive and is haemodynamically stable probably needs none.',
  'Other causes of large variation exist, airway obstruction among them.',
  'Values outside the validity conditions are shown as not valid, with the reason.',
  "Defer to local protocols, the institution's clinical governance and licensed practice.",
];
