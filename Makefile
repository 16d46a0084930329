# coterie: build, test, benchmark, install.
#   make                 build ./coterie
#   make check           unit tests, command tests and explorer tests
#   make bench           benchmarks (print figures, assert nothing)
#   make deps            install the Debian packages needed (as root)
#   make install PREFIX=/usr/local
#   make SANITIZE=address,undefined check    sanitizer build in build-address-undefined/
#   make SANITIZE=thread check
#   make DEVELOPER=1     warnings become errors

CC       ?= cc
PREFIX   ?= /usr/local
PKGS     := igraph ncursesw cmocka jansson zlib cairo fontconfig
DEB_PKGS := build-essential pkg-config libigraph-dev libncurses-dev libcmocka-dev \
            libjansson-dev zlib1g-dev tmux python3 python3-networkx python3-sklearn python3-igraph python3-scipy \
            groff-base man-db libcairo2-dev poppler-utils libopenmpi-dev openmpi-bin

comma := ,
ifeq ($(SANITIZE),)
BUILD := build
BIN   := coterie
SANFLAGS :=
else
BUILD := build-$(subst $(comma),-,$(SANITIZE))
BIN   := $(BUILD)/coterie
SANFLAGS := -fsanitize=$(SANITIZE) -fno-sanitize-recover=all -fno-omit-frame-pointer
endif

WARN := -Wall -Wextra -Wshadow -Wstrict-prototypes -Wmissing-prototypes \
        -Wwrite-strings -Wformat=2 -Wvla
ifeq ($(DEVELOPER),1)
WARN += -Werror
endif

PKG_CFLAGS := $(filter-out -D_XOPEN_SOURCE=% -D_DEFAULT_SOURCE,$(shell pkg-config --cflags $(PKGS) 2>/dev/null))
PKG_LIBS   := $(shell pkg-config --libs igraph ncursesw jansson zlib cairo fontconfig 2>/dev/null)
CMOCKA_LIBS := $(shell pkg-config --libs cmocka 2>/dev/null)

CFLAGS   ?= -O2 -g
ALL_CFLAGS := -std=c11 -D_POSIX_C_SOURCE=200809L -D_DEFAULT_SOURCE -D_XOPEN_SOURCE=700 \
              -pthread -Iinclude $(PKG_CFLAGS) $(WARN) $(CFLAGS) $(SANFLAGS) -MMD -MP
ALL_LDFLAGS := -pthread $(SANFLAGS) $(LDFLAGS)
LIBS := $(PKG_LIBS) -lm

# src/mpi*.c are the MPI front end: built into coterie-mpi only, never the core.
MPI_SRC  := $(wildcard src/mpi*.c)
CORE_SRC := $(filter-out $(MPI_SRC),$(wildcard src/*.c))
APP_SRC  := $(wildcard src/cli/*.c src/tui/*.c)
TEST_SRC := $(wildcard tests/unit/test_*.c)

CORE_OBJ := $(CORE_SRC:%.c=$(BUILD)/%.o)
APP_OBJ  := $(APP_SRC:%.c=$(BUILD)/%.o)
TEST_BIN := $(TEST_SRC:tests/unit/%.c=$(BUILD)/tests/unit/%)
TEST_HELPER_OBJ := $(BUILD)/tests/unit/helpers.o
LIB := $(BUILD)/libcoterie.a

# coterie-mpi (the fit shared among MPI processes) is built beside coterie
# whenever mpicc is found; coterie itself links no MPI. It takes the core,
# `fit`'s command code and src/mpi*.c.
MPICC    ?= mpicc
HAVE_MPI := $(shell command -v $(MPICC) >/dev/null 2>&1 && echo 1)
MPI_BIN  := $(if $(SANITIZE),$(BUILD)/coterie-mpi,coterie-mpi)
MPI_OBJ  := $(MPI_SRC:%.c=$(BUILD)/%.o)
MPI_APP_OBJ := $(BUILD)/src/cli/fit.o $(BUILD)/src/cli/fit_progress.o $(BUILD)/src/cli/common.o
MPI_TARGET := $(if $(HAVE_MPI),$(MPI_BIN),mpi-skip)

.PHONY: all check unit bench install clean deps demo fuzz memcheck mpi-skip

all: $(BIN) $(MPI_TARGET)

$(BUILD)/src/mpi%.o: src/mpi%.c
	@mkdir -p $(dir $@)
	$(MPICC) $(ALL_CFLAGS) -c $< -o $@

$(MPI_BIN): $(MPI_OBJ) $(MPI_APP_OBJ) $(LIB)
	$(MPICC) $(ALL_LDFLAGS) -o $@ $(MPI_OBJ) $(MPI_APP_OBJ) $(LIB) $(LIBS)

mpi-skip:
	@echo "note: $(MPICC) not found, coterie-mpi not built (make deps installs Open MPI)"

# coterie-mpi-mpich: the same front end built with MPICH (Debian's mpich
# and libmpich-dev install beside Open MPI), to keep the code portable.
# Not in `all`; `make check` builds it when $(MPICH_CC) is found and
# tests/cli/fit_mpich.sh runs it under mpirun.mpich. Only src/mpi*.c see
# mpi.h, so only they are compiled again (MPICH's handles differ).
MPICH_CC ?= mpicc.mpich
HAVE_MPICH := $(shell command -v $(MPICH_CC) >/dev/null 2>&1 && echo 1)
MPICH_BIN := $(if $(SANITIZE),$(BUILD)/coterie-mpi-mpich,coterie-mpi-mpich)
MPICH_OBJ := $(MPI_SRC:%.c=$(BUILD)/mpich/%.o)

$(BUILD)/mpich/src/mpi%.o: src/mpi%.c
	@mkdir -p $(dir $@)
	$(MPICH_CC) $(ALL_CFLAGS) -c $< -o $@

$(MPICH_BIN): $(MPICH_OBJ) $(MPI_APP_OBJ) $(LIB)
	$(MPICH_CC) $(ALL_LDFLAGS) -o $@ $(MPICH_OBJ) $(MPI_APP_OBJ) $(LIB) $(LIBS)

$(BUILD)/%.o: %.c
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) -c $< -o $@

$(LIB): $(CORE_OBJ)
	@mkdir -p $(dir $@)
	rm -f $@
	ar rcs $@ $^

$(BIN): $(APP_OBJ) $(LIB)
	$(CC) $(ALL_LDFLAGS) -o $@ $(APP_OBJ) $(LIB) $(LIBS)

$(TEST_HELPER_OBJ): tests/unit/helpers.c tests/unit/helpers.h
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) -c $< -o $@

$(BUILD)/tests/unit/test_%: tests/unit/test_%.c $(TEST_HELPER_OBJ) $(LIB)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(ALL_LDFLAGS) -o $@ $< $(TEST_HELPER_OBJ) $(LIB) $(LIBS) $(CMOCKA_LIBS)

# The explorer's state is tested without a terminal: these files of
# src/tui/ hold the view and its caches (view.h) and include no curses, so
# their objects link into test_tui_view beside the core library. Keep the
# list to such files.
TUI_STATE_OBJ := $(BUILD)/src/tui/view.o $(BUILD)/src/tui/pager.o $(BUILD)/src/tui/sides.o

$(BUILD)/tests/unit/test_tui_view: tests/unit/test_tui_view.c $(TUI_STATE_OBJ) $(TEST_HELPER_OBJ) $(LIB)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(ALL_LDFLAGS) -o $@ $< $(TUI_STATE_OBJ) $(TEST_HELPER_OBJ) $(LIB) $(LIBS) $(CMOCKA_LIBS)

# Unit tests only (fast while working on the core).
unit: $(TEST_BIN)
	@COTERIE_BIN=$(abspath $(BIN)) tests/run.sh --unit $(TEST_BIN)

# CHECK_FLAGS=--no-tui leaves out the explorer tests (CI's sanitizer run).
check: $(BIN) $(MPI_TARGET) $(if $(HAVE_MPICH),$(MPICH_BIN)) $(TEST_BIN)
	@COTERIE_BIN=$(abspath $(BIN)) tests/run.sh $(CHECK_FLAGS) $(TEST_BIN)

# The command tests of fit under valgrind's memcheck: COTERIE_BIN is a
# script that runs the binary under valgrind, which exits 99 on any memory
# error or definite leak (so the test that ran it fails) and logs to
# build/memcheck/vg.PID.log; the logs with errors are listed at the end.
# --fair-sched=yes: valgrind runs one thread at a time, and by default the
# fitting thread kept the lock for whole starts, so the progress lines the
# interrupt tests wait for came too late (or never).
memcheck: $(BIN)
	@rm -rf build/memcheck && mkdir -p build/memcheck
	@printf '#!/bin/sh\nexec valgrind -q --fair-sched=yes --error-exitcode=99 --leak-check=full --show-leak-kinds=definite --errors-for-leak-kinds=definite --log-file=%s/vg.%%p.log %s "$$@"\n' \
	  $(abspath build/memcheck) $(abspath $(BIN)) >build/memcheck/coterie
	@chmod +x build/memcheck/coterie
	@COTERIE_BIN=$(abspath build/memcheck/coterie) tests/run.sh --cli 'fit_*'; rc=$$?; \
	  bad=$$(find build/memcheck -name 'vg.*.log' -size +0 | wc -l); \
	  echo "memcheck: $$(ls build/memcheck/vg.*.log | wc -l) runs under valgrind, $$bad with errors"; \
	  find build/memcheck -name 'vg.*.log' -size +0 -exec sh -c 'echo "== $$1"; head -40 "$$1"' sh {} \; ; \
	  [ $$rc -eq 0 ] && [ $$bad -eq 0 ]

BENCH_TOOLS := $(BUILD)/bench/benchtool $(BUILD)/bench/gen_planted

bench: $(BIN) $(BENCH_TOOLS)
	@COTERIE_BIN=$(abspath $(BIN)) BENCH_TOOLS=$(abspath $(BUILD)/bench) tests/bench/run.sh

$(BUILD)/bench/benchtool: tests/bench/benchtool.c $(LIB)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(ALL_LDFLAGS) -o $@ $< $(LIB) $(LIBS)

$(BUILD)/bench/gen_planted: tests/bench/gen_planted.c
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(ALL_LDFLAGS) -o $@ $< -lm

demo: $(BIN)
	./$(BIN) explore samples/town/edges.tsv -k 12

deps:
	apt-get update
	DEBIAN_FRONTEND=noninteractive apt-get install -y --no-install-recommends $(DEB_PKGS)

install: $(BIN)
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/share/man/man1 $(DESTDIR)$(PREFIX)/share/man/man5
	install -m 755 $(BIN) $(DESTDIR)$(PREFIX)/bin/coterie
	install -m 644 man/coterie.1 $(DESTDIR)$(PREFIX)/share/man/man1/coterie.1
	install -m 644 man/coterie-files.5 $(DESTDIR)$(PREFIX)/share/man/man5/coterie-files.5

clean:
	rm -rf build build-* coterie coterie-mpi coterie-mpi-mpich

-include $(shell find build* -name '*.d' 2>/dev/null)

# Fuzz the readers of hostile files with libFuzzer (needs clang): each
# harness tests/fuzz/fuzz_NAME.c runs for FUZZ_SECONDS (default 60) on its
# seed corpus tests/fuzz/corpus/NAME plus what it found before, kept in
# build/fuzz/corpus-NAME. A crash leaves its input in build/fuzz/.
FUZZ_SECONDS ?= 60
FUZZ_TARGETS := graph checkpoint cover result
FUZZ_CC ?= clang
FUZZ_CFLAGS := -std=c11 -D_POSIX_C_SOURCE=200809L -D_DEFAULT_SOURCE -D_XOPEN_SOURCE=700 \
               -pthread -g -O1 -fsanitize=fuzzer,address,undefined -Iinclude $(PKG_CFLAGS)
build/fuzz/fuzz_%: tests/fuzz/fuzz_%.c tests/fuzz/fuzz_common.h $(CORE_SRC)
	@mkdir -p build/fuzz
	$(FUZZ_CC) $(FUZZ_CFLAGS) $< $(CORE_SRC) $(PKG_LIBS) -lm -o $@
fuzz: $(FUZZ_TARGETS:%=build/fuzz/fuzz_%)
	@for t in $(FUZZ_TARGETS); do \
	  mkdir -p build/fuzz/corpus-$$t; \
	  echo "== fuzz_$$t for $(FUZZ_SECONDS) s"; \
	  ./build/fuzz/fuzz_$$t -max_total_time=$(FUZZ_SECONDS) -print_final_stats=1 \
	    -artifact_prefix=build/fuzz/$$t- build/fuzz/corpus-$$t tests/fuzz/corpus/$$t || exit 1; \
	done
