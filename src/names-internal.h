/*
 * names-internal.h: the inside of the name table (names.c), for the one
 * reader that needs it: the edge-list reader (graph_edgelist.c) hashes the
 * names of a batch of lines first, prefetches the slots they will probe,
 * and looks them up with the inline hit path below, so a lookup that finds
 * its name costs no call. Nothing else includes this header: other code
 * goes through include/coterie/names.h.
 *
 * The table: open addressing (linear probing, power-of-two size, at most
 * half full). A slot is 16 bytes: a name shorter than NAMES_SHORT bytes is
 * kept whole in it (its NUL-padded head), a longer one by a pointer to its
 * copy in the arena; the slot also keeps 31 bits of the hash, so doubling
 * the table does not rehash the names (below 2^31 slots).
 */
#ifndef COTERIE_NAMES_INTERNAL_H
#define COTERIE_NAMES_INTERNAL_H

#include <stdint.h>
#include <string.h>

#include "coterie/names.h"

#define NAMES_SLOT_EMPTY UINT32_MAX
#define NAMES_SLOT_LONG 0x80000000u
#define NAMES_SHORT 8 /* names shorter than this live in their slot's key */

struct names_slot {
	uint64_t key; /* a short name's head (names_head()), or a long name's interned copy */
	uint32_t tag; /* NAMES_SLOT_LONG for a long name | low 31 bits of its hash */
	uint32_t id;  /* NAMES_SLOT_EMPTY when free */
};

struct names_chunk;

struct names {
	struct names_slot *slots;
	uint64_t mask;       /* capacity - 1; capacity is a power of two */
	uint32_t count;
	char **name;         /* count names, in id order */
	size_t name_cap;
	struct names_chunk *chunks;
	char *cur;           /* free space in the newest chunk */
	size_t left;
};

/* The first 8 bytes of s[0..len), zero-padded. A name shorter than 8
 * bytes is equal to another exactly when their heads are (the padding
 * marks where it ends; names hold no NUL), so looking up the short names
 * of most graphs (numbers) never touches the string. */
static inline uint64_t names_head(const char *s, size_t len)
{
	unsigned char b[8] = { 0 };
	memcpy(b, s, len < 8 ? len : 8);
	uint64_t h;
	memcpy(&h, b, 8);
	return h;
}

/* names_head() for a name with at least 8 readable bytes from s (the
 * reader's buffers end in padding): one load and a mask. */
static inline uint64_t names_head_padded(const char *s, size_t len)
{
#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__
	uint64_t h;
	memcpy(&h, s, 8);
	return len < 8 ? h & ((UINT64_C(1) << (8 * len)) - 1) : h;
#else
	return names_head(s, len);
#endif
}

static inline uint64_t names_mix(uint64_t h)
{
	h ^= h >> 33;
	h *= 0xff51afd7ed558ccdULL;
	h ^= h >> 33;
	h *= 0xc4ceb9fe1a85ec53ULL;
	h ^= h >> 33;
	return h;
}

/* The hash of a name: its head mixed for a short name (no loop, no
 * string), eight bytes at a time for a long one. Only the table's layout
 * depends on it: ids follow first appearance whatever the hash. */
static inline uint64_t names_hash_head(const char *s, size_t len, uint64_t head)
{
	if (len < NAMES_SHORT)
		return names_mix(head);
	uint64_t h = (uint64_t)len * 0x9e3779b97f4a7c15ULL;
	size_t i = 0;
	for (; i + 8 <= len; i += 8) {
		uint64_t w;
		memcpy(&w, s + i, 8);
		h = (h ^ w) * 0x100000001b3ULL;
		h ^= h >> 29;
	}
	if (i < len)
		h = (h ^ names_head(s + i, len - i)) * 0x100000001b3ULL;
	return names_mix(h);
}

static inline uint32_t names_tag(size_t len, uint64_t h)
{
	return ((uint32_t)h & ~NAMES_SLOT_LONG) | (len >= NAMES_SHORT ? NAMES_SLOT_LONG : 0);
}

/* Slot index holding name s[0..len) (head = names_head(), h its hash), or
 * the free slot where it would go. */
static inline uint64_t names_probe(const struct names *t, const char *s, size_t len,
				   uint64_t h, uint64_t head)
{
	uint64_t i = h & t->mask;
	uint32_t tag = names_tag(len, h);
	for (;;) {
		const struct names_slot *sl = &t->slots[i];
		if (sl->id == NAMES_SLOT_EMPTY)
			return i;
		if (sl->tag == tag) {
			if (len < NAMES_SHORT) {
				if (sl->key == head)
					return i;
			} else {
				const char *nm = (const char *)(uintptr_t)sl->key;
				/* s holds no NUL, so strncmp stops only at nm's end or at len */
				if (strncmp(nm, s, len) == 0 && nm[len] == '\0')
					return i;
			}
		}
		i = (i + 1) & t->mask;
	}
}

/* Add the name s[0..len) that names_probe() did not find at free slot i:
 * names_intern()'s slow path (names.c). Returns its id, -1 or NAMES_FULL. */
int64_t names_add(struct names *t, uint64_t i, const char *s, size_t len, uint64_t h,
		  uint64_t head);

/* names_intern() with the head and hash already computed. */
static inline int64_t names_intern_h(struct names *t, const char *s, size_t len, uint64_t h,
				     uint64_t head, int *added)
{
	uint64_t i = names_probe(t, s, len, h, head);
	if (t->slots[i].id != NAMES_SLOT_EMPTY) {
		*added = 0;
		return t->slots[i].id;
	}
	*added = 1;
	return names_add(t, i, s, len, h, head);
}

/* Start fetching the slot where a name of hash h is probed first. A
 * macro: GCC 12 drops the prefetches of an inline function, which it
 * takes for one without effects. */
#if defined(__GNUC__)
#define names_prefetch_slot(t, h) __builtin_prefetch(&(t)->slots[(h) & (t)->mask])
#else
#define names_prefetch_slot(t, h) ((void)0)
#endif

/* Once that slot is in: when it holds a long name that may be this one
 * (len bytes, hash h), start fetching the string. */
#if defined(__GNUC__)
#define names_prefetch_long(t, len, h)                                           \
	do {                                                                     \
		const struct names_slot *sl_ = &(t)->slots[(h) & (t)->mask];     \
		if ((len) >= NAMES_SHORT && sl_->id != NAMES_SLOT_EMPTY &&       \
		    sl_->tag == names_tag((len), (h)))                           \
			__builtin_prefetch((const char *)(uintptr_t)sl_->key);    \
	} while (0)
#else
#define names_prefetch_long(t, len, h) ((void)0)
#endif

#endif
