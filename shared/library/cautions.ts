// Cautions shown where the work can hurt someone (README.md, "Safety"). Each names the rule it rests on and defers to the
// manufacturer's instructions, local codes and licensed practice.

export const LOCKOUT =
  'Lock out and tag out every energy source (starter, control power, oil pump, pumps) before opening a starter, panel or terminal box, or reaching into the drive train (OSHA 29 CFR 1910.147).'

export const ARC_FLASH =
  'Live electrical readings are taken only by qualified people, wearing the arc-flash PPE the site assessment calls for, with the arc-flash boundary kept (NFPA 70E).'

export const REFRIGERANT =
  "Refrigerant is handled only by technicians certified for this machine's refrigerant (EPA Section 608); refrigerant is recovered, never vented."

export const NEVER_BYPASS =
  'Never bypass, jumper or raise a safety control to keep the machine running; find and correct the cause of a trip.'

export const COUPLINGS =
  'Stay clear of couplings and shafts; run only with every coupling guard in place (29 CFR 1910.219).'

export const PRESSURE_VESSEL =
  "Never isolate or adjust a relief valve, and never let a test take a vessel above its marked working pressure (ASME BPVC Section VIII)."

export const DEFER =
  "This checklist supports, and does not replace, the manufacturer's start-up instructions, local codes and licensed practice; where they differ, follow them."

export const SAFETY_TEST =
  "Test each safety only as the manufacturer describes and with the manufacturer's or controls technician's agreement; a test that cannot be made safely is given the disposition \u201cnot done\u201d with the reason, never forced; it stays on the report as an exception until it is made."
