/*
Canalstep designs the long section of an irrigation canal on real terrain.

It samples a DEM along GeoJSON alignments, designs the canal section within
its velocity limits, places vertical drop structures at least cost, checks
each drop's stilling basin and outlet, and writes station lists and plots.
It is a preliminary design aid: site survey, geotechnical and structural
review and a licensed engineer's approval come before construction, local
codes govern, and drops and hydraulic jumps are drowning hazards.

Usage:

	canalstep <command> [flags]

The commands are:

	profile   ground long section along each alignment (ground.csv, ground.png)
	section   canal section: normal and critical depth, velocity-limited grades, freeboard
	drop      one straight drop: nappe, pool, jump, basin, end sill, outlet check over flows
	plan      least-cost drop placement on the real ground, beside two hand methods, with every deliverable
	compare   plan several drop-height sets and compare earthwork and cost
	demo      build the fictional demo scheme on generated terrain and run canalstep on it

Every command prints its flags with --help. Values are SI (m, m³/s, m/s)
unless --units us is given (ft, cfs, ft/s); the conversion happens only at
the edges. Each number flag states in --help the physical range its value
must lie in. Exit status is 0 on success; 1 for a design or data failure
(an infeasible plan, an alignment that failed); 2 for bad usage or input
(a bad or missing flag, an unreadable or hostile file, a value out of
range, controls in conflict); 3 for an internal error (a bug: one line,
no stack trace); 128+n when interrupted by signal n (130 SIGINT, 143
SIGTERM, 129 SIGHUP), with every finished alignment folder whole and
nothing half-written. A failed alignment never stops the others; the last
line says which folders were written.

Examples:

	canalstep profile --dem dem.tif --alignment canals.geojson --spacing 10 --out out
	canalstep section --flow 2.5 --bottom-width 2 --side-slope 1.5 --roughness 0.025 --max-velocity 0.9 --min-velocity 0.45
	canalstep drop --flow 2.5 --width 2 --height 1.5 --bottom-width 2 --side-slope 1.5 --roughness 0.025 --slope 0.001
	canalstep plan --dem dem.tif --alignment canals.geojson --design design.toml --out out
	canalstep compare --dem dem.tif --alignment canals.geojson --design design.toml --alternatives "1.0;1.5;1.0,1.5" --out out
*/
package main
