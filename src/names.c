/*
 * names: the string-interning table (see names.h for the contract and
 * src/names-internal.h for the slot layout and the inline lookup).
 *
 * The idea: ids are handed out in order of first appearance, so the hash
 * function shapes only the table, never a result. Lookups probe slots of 16
 * bytes (short names are compared as one word, never as strings); the
 * strings live in an arena of chunks that double from 4 KiB to 1 MiB (small
 * tables stay small), a name of more than a quarter of the largest chunk in
 * a chunk of its own. A large table asks for transparent huge pages: on a
 * graph of millions of nodes every lookup lands anywhere in it.
 *
 * Invariants: at most half the slots are used; every used slot's id is
 * below count and name[id] is its string; a long name's slot key points to
 * that same string. The thing a newcomer gets wrong: interned strings never
 * move (the arena only grows), but the slots and the name array do, so keep
 * ids, or the pointers names_name() gives, never a slot.
 */
#include "names-internal.h"

#include <stdlib.h>

#include "coterie/util.h"

#define ARENA_CHUNK ((size_t)1 << 20) /* largest arena chunk */

struct names_chunk {
	struct names_chunk *next;
	size_t cap;
	char data[];
};

/* Slots for a table of cap entries, every one free. */
static struct names_slot *slots_alloc(uint64_t cap)
{
	struct names_slot *sl = util_malloc((size_t)cap, sizeof *sl);
	if (!sl)
		return NULL;
	util_advise_huge(sl, (size_t)cap * sizeof *sl);
	memset(sl, 0xff, (size_t)cap * sizeof *sl); /* id = NAMES_SLOT_EMPTY */
	return sl;
}

struct names *names_new(uint64_t expect)
{
	struct names *t = util_calloc(1, sizeof *t);
	if (!t)
		return NULL;
	uint64_t cap = 1024;
	while (cap < 2 * expect && cap < ((uint64_t)1 << 40))
		cap <<= 1;
	t->slots = slots_alloc(cap);
	if (!t->slots) {
		free(t);
		return NULL;
	}
	t->mask = cap - 1;
	return t;
}

void names_free(struct names *t)
{
	if (!t)
		return;
	struct names_chunk *c = t->chunks;
	while (c) {
		struct names_chunk *next = c->next;
		free(c);
		c = next;
	}
	free(t->slots);
	free(t->name);
	free(t);
}

/* Double the table. Below 2^31 slots the tag's hash bits give the new
 * place without touching the names. */
static int names_grow(struct names *t)
{
	uint64_t cap = (t->mask + 1) * 2;
	struct names_slot *ns = slots_alloc(cap);
	if (!ns)
		return -1;
	for (uint64_t i = 0; i <= t->mask; i++) {
		const struct names_slot *sl = &t->slots[i];
		if (sl->id == NAMES_SLOT_EMPTY)
			continue;
		uint64_t h = sl->tag & ~NAMES_SLOT_LONG;
		if (cap > ((uint64_t)1 << 31)) {
			if (sl->tag & NAMES_SLOT_LONG) {
				const char *nm = (const char *)(uintptr_t)sl->key;
				size_t len = strlen(nm);
				h = names_hash_head(nm, len, names_head(nm, len));
			} else {
				h = names_mix(sl->key);
			}
		}
		uint64_t j = h & (cap - 1);
		while (ns[j].id != NAMES_SLOT_EMPTY)
			j = (j + 1) & (cap - 1);
		ns[j] = *sl;
	}
	free(t->slots);
	t->slots = ns;
	t->mask = cap - 1;
	return 0;
}

static char *arena_copy(struct names *t, const char *s, size_t len)
{
	if (len + 1 > t->left) {
		size_t normal = t->chunks ? t->chunks->cap * 2 : 4096;
		if (normal > ARENA_CHUNK)
			normal = ARENA_CHUNK;
		size_t cap = len + 1 > normal ? len + 1 : normal;
		struct names_chunk *c = util_malloc(1, sizeof *c + cap);
		if (!c)
			return NULL;
		c->cap = cap;
		if (len + 1 > ARENA_CHUNK / 4 && t->chunks) {
			/* a big name gets a chunk of its own, behind the current one */
			c->next = t->chunks->next;
			t->chunks->next = c;
			memcpy(c->data, s, len);
			c->data[len] = '\0';
			return c->data;
		}
		c->next = t->chunks;
		t->chunks = c;
		t->cur = c->data;
		t->left = cap;
	}
	char *p = t->cur;
	memcpy(p, s, len);
	p[len] = '\0';
	t->cur += len + 1;
	t->left -= len + 1;
	return p;
}

int64_t names_add(struct names *t, uint64_t i, const char *s, size_t len, uint64_t h,
		  uint64_t head)
{
	if ((uint64_t)t->count >= NAMES_MAX)
		return NAMES_FULL;
	if ((uint64_t)t->count + 1 > (t->mask + 1) / 2) {
		if (names_grow(t) < 0)
			return -1;
		i = names_probe(t, s, len, h, head);
	}
	if (t->count == t->name_cap) {
		size_t cap = t->name_cap ? t->name_cap * 2 : 1024;
		char **nn = util_realloc(t->name, cap, sizeof *nn);
		if (!nn)
			return -1;
		t->name = nn;
		t->name_cap = cap;
	}
	char *copy = arena_copy(t, s, len);
	if (!copy)
		return -1;
	uint32_t id = t->count++;
	t->name[id] = copy;
	t->slots[i].key = len < NAMES_SHORT ? head : (uint64_t)(uintptr_t)copy;
	t->slots[i].tag = names_tag(len, h);
	t->slots[i].id = id;
	return id;
}

int64_t names_intern(struct names *t, const char *s, size_t len, int *added)
{
	uint64_t head = names_head(s, len);
	return names_intern_h(t, s, len, names_hash_head(s, len, head), head, added);
}

int64_t names_find(const struct names *t, const char *s)
{
	size_t len = strlen(s);
	uint64_t head = names_head(s, len);
	uint64_t i = names_probe(t, s, len, names_hash_head(s, len, head), head);
	return t->slots[i].id == NAMES_SLOT_EMPTY ? -1 : (int64_t)t->slots[i].id;
}

uint32_t names_count(const struct names *t)
{
	return t->count;
}

const char *names_name(const struct names *t, uint32_t id)
{
	return id < t->count ? t->name[id] : NULL;
}

void names_trim(struct names *t)
{
	if (t->count >= t->name_cap)
		return;
	char **nn = realloc(t->name, (t->count ? t->count : 1) * sizeof *nn);
	if (nn) {
		t->name = nn;
		t->name_cap = t->count;
	}
}
