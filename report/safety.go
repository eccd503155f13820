// Package report writes canalstep's deliverables: CSV station lists, JSON
// summaries and long-section plots. Writers go through temporary files so a
// failed run leaves nothing half-written.
package report

// SafetyNotice is printed at the end of every plan, written into every
// summary and shown in the README. Keep its substance when editing.
const SafetyNotice = `SAFETY AND RESPONSIBILITY NOTICE
canalstep is a preliminary design aid. Its results are not a construction design.
Before anything is built: survey the site, have the geotechnical and structural
design reviewed, and have a licensed engineer check and approve the design.
Local codes, standards and the owner's criteria govern where they differ.
Drops, stilling basins and hydraulic jumps are drowning hazards: the roller of a
jump traps swimmers and rescuers alike. Fence them, sign both banks, and keep
the public out of the canal and its structures.`
