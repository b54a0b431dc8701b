/* Minimal test helpers for rotaframe's C tests (C99). */
#ifndef ROTAFRAME_TEST_CHECK_H
#define ROTAFRAME_TEST_CHECK_H

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "rotaframe.h"

static int check_failures = 0;
static int check_count = 0;

#define CHECK(cond, ...)                                                   \
    do {                                                                   \
        ++check_count;                                                     \
        if (!(cond)) {                                                     \
            ++check_failures;                                              \
            fprintf(stderr, "%s:%d: check failed: %s: ", __FILE__, __LINE__, #cond); \
            fprintf(stderr, __VA_ARGS__);                                  \
            fprintf(stderr, "\n");                                         \
        }                                                                  \
    } while (0)

/* The call must succeed. */
#define OK(call)                                                           \
    do {                                                                   \
        rf_status ok_status_ = (call);                                     \
        CHECK(ok_status_ == RF_STATUS_OK, "%s returned %u: %s", #call, (unsigned)ok_status_, rf_status_message(ok_status_)); \
    } while (0)

/* |got - want| <= tol. */
#define CLOSE(got, want, tol, what)                                        \
    do {                                                                   \
        double close_g_ = (got), close_w_ = (want);                        \
        CHECK(fabs(close_g_ - close_w_) <= (tol), "%s: got %.17g, want %.17g (tolerance %g)", what, close_g_, close_w_, (double)(tol)); \
    } while (0)

/* Every one of the `n` bytes at `p` still holds the `fill` byte written before a call. */
static inline int still_filled(const void *p, size_t n, unsigned char fill) {
    const unsigned char *b = (const unsigned char *)p;
    size_t i;
    for (i = 0; i < n; ++i)
        if (b[i] != fill) return 0;
    return 1;
}

static int check_report(const char *name) {
    if (check_failures == 0) {
        printf("%s: %d checks passed\n", name, check_count);
        return 0;
    }
    printf("%s: %d of %d checks FAILED\n", name, check_failures, check_count);
    return 1;
}

#endif
