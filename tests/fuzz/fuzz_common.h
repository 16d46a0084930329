/*
 * What the fuzz harnesses share (header-only; each harness includes it
 * once): the message sink that turns a raw control byte on its way to a
 * terminal into a finding, and the input as a file without a disk (a
 * memfd, read back through /proc/self/fd).
 */
#ifndef COTERIE_FUZZ_COMMON_H
#define COTERIE_FUZZ_COMMON_H

/* memfd_create() needs _GNU_SOURCE, defined by each harness before its
 * first include */
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <sys/mman.h>
#include <unistd.h>

/* util_set_sink() target: messages must never carry raw control bytes to
 * a terminal */
__attribute__((unused)) static void fuzz_sink(int level, const char *msg)
{
	(void)level;
	for (const unsigned char *p = (const unsigned char *)msg; *p; p++)
		if (*p < 0x20 || *p == 0x7f)
			__builtin_trap();
}

/* data (size bytes) as the content of this harness's memfd, whose path
 * goes to path (64 bytes). */
__attribute__((unused)) static void fuzz_file(const void *data, size_t size, char path[64])
{
	static int fd = -1;
	if (fd < 0 && (fd = memfd_create("coterie-fuzz", 0)) < 0)
		abort();
	if (ftruncate(fd, 0) || (size && pwrite(fd, data, size, 0) != (ssize_t)size))
		abort();
	snprintf(path, 64, "/proc/self/fd/%d", fd);
}

#endif
