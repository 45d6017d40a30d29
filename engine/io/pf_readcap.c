/* pf_readcap.c - overflow-checked sizes of file contents and the memory-cap
 * check every file reader runs before it allocates. */
#include <inttypes.h>
#include "pf_readcap.h"

pf_status pf_read_shape_bytes(pf_context *ctx, const char *path, const char *what, int rank, const uint64_t *dims,
                              size_t elem, size_t *bytes)
{
    size_t total = elem;
    for (int a = 0; a < rank; a++) {
        if (dims[a] > PF_READ_MAX_AXIS)
            return pf_fail(ctx, PF_ELIMIT, "'%s': %s claims %" PRIu64 " entries on axis %d (at most %" PRIu64 ")", path,
                           what, dims[a], a + 1, PF_READ_MAX_AXIS);
        /* Checked per factor: three axes below the limit can still wrap a
         * 64-bit size once multiplied by the element size. */
        if (__builtin_mul_overflow(total, (size_t)dims[a], &total))
            return pf_fail(ctx, PF_ELIMIT, "'%s': the size of %s overflows", path, what);
    }
    *bytes = total;
    return PF_OK;
}

pf_status pf_read_budget(pf_context *ctx, const char *path, size_t bytes)
{
    size_t cap = pf_context_memory_cap(ctx), used = pf_context_memory_used(ctx);
    if (bytes > pf_context_memory_room(ctx))
        return pf_fail(ctx, PF_ELIMIT,
                       "file '%s' needs %zu bytes, over the memory cap (%zu bytes, %zu in use); "
                       "raise --memory-cap if the file is what you expect",
                       path, bytes, cap, used);
    return PF_OK;
}

size_t pf_read_add(size_t a, size_t b)
{
    size_t s;
    return __builtin_add_overflow(a, b, &s) ? SIZE_MAX : s;
}

pf_status pf_read_hold(pf_context *ctx, const char *path, size_t bytes, pf_context **charged_ctx, size_t *charged)
{
    if (pf_context_charge(ctx, bytes) != PF_OK)
        return pf_fail(ctx, pf_context_status(ctx), "file '%s': its %zu bytes of values do not fit under the memory cap",
                       path, bytes);
    pf_context_retain(ctx);
    *charged_ctx = ctx;
    *charged = bytes;
    return PF_OK;
}
