/* Shared test helpers: invariant checks for the core structs and paths to
 * test data. Include after <cmocka.h>'s prerequisites. */
#ifndef COTERIE_TEST_HELPERS_H
#define COTERIE_TEST_HELPERS_H

#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <stdint.h>
#include <cmocka.h>

struct graph;
struct model;
struct cover;
struct fcsr;

void assert_graph_sane(const struct graph *g);
void assert_model_sane(const struct model *m);
void assert_cover_sane(const struct cover *c);
void assert_fcsr_sane(const struct fcsr *f);

/* Path of a file under tests/data (static buffer; copy if you keep it). */
const char *test_data(const char *rel);
/* A fresh empty temporary folder (static buffer), removed by nothing:
 * tests clean up with test_rmtree(). */
const char *test_tmpdir(void);
void test_rmtree(const char *dir);
/* Write a string to a file; returns the path (static buffer). */
const char *test_write_file(const char *dir, const char *name, const char *text);

#endif
