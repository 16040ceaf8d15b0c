# lines.mk -- restack only the lines whose inputs changed (GNU make).
#
#   make -f demo/batch/lines.mk -j2 JOBDIR=jobs OUT=out TZERO=tzero
#
# One target per job file JOBDIR/NAME.job.json: OUT/NAME_stack.sgy (with its QC report).
# Each run writes OUT/NAME.d (tzero stack --depfile), which makes the section depend on
# the job file, its shot files, its velocity table and every other input, so after a
# velocity file is revised `make -j2` restacks that line alone. Before the first run a
# line has no .d file and no section, so it is stacked anyway. -j N runs N lines side by
# side; THREADS x N should not exceed the machine's cores.
TZERO   ?= tzero
JOBDIR  ?= jobs
OUT     ?= out
THREADS ?= 1
HERE    := $(dir $(lastword $(MAKEFILE_LIST)))

JOBS  := $(wildcard $(JOBDIR)/*.job.json)
LINES := $(patsubst $(JOBDIR)/%.job.json,%,$(JOBS))

.PHONY: all
all: $(LINES:%=$(OUT)/%_stack.sgy)

$(OUT)/%_stack.sgy: $(JOBDIR)/%.job.json
	@TZERO='$(TZERO)' OUT='$(OUT)' THREADS='$(THREADS)' sh '$(HERE)stack_line.sh' '$<'

-include $(LINES:%=$(OUT)/%.d)
