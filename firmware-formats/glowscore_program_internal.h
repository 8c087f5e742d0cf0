/* glowscore_program_internal.h: what the two halves of the reference player share
 * (glowscore_program_open.c: the container, its checks and the marks;
 * glowscore_program.c: the frames). Not part of the interface: a firmware build
 * compiles both .c files and includes only glowscore_program.h.
 */
#ifndef GLOWSCORE_PROGRAM_INTERNAL_H
#define GLOWSCORE_PROGRAM_INTERNAL_H

#include "glowscore_program.h"

#include <string.h>

/* ---- bytes ---------------------------------------------------------------- */

static inline uint32_t rd32(const uint8_t *p)
{
    return (uint32_t)p[0] | ((uint32_t)p[1] << 8) | ((uint32_t)p[2] << 16) | ((uint32_t)p[3] << 24);
}

static inline uint16_t rd16(const uint8_t *p)
{
    return (uint16_t)(p[0] | (p[1] << 8));
}

static inline uint64_t rdu64(const uint8_t *p)
{
    return (uint64_t)rd32(p) | ((uint64_t)rd32(p + 4) << 32);
}

static inline int64_t rdi64(const uint8_t *p)
{
    uint64_t u = rdu64(p);
    /* Two's complement to signed without relying on implementation-defined casts. */
    if (u & 0x8000000000000000ull) {
        return -(int64_t)(~u) - 1;
    }
    return (int64_t)u;
}

static inline float rdf32(const uint8_t *p)
{
    uint32_t u = rd32(p);
    float f;
    memcpy(&f, &u, sizeof f);
    return f;
}

/* ---- sections --------------------------------------------------------------- */

#define TEMPO_ENTRY 20u
#define LED_ENTRY 8u
#define SPAN_ENTRY 48u
#define ROTOR_ENTRY 16u
#define COLOUR_ENTRY 15u
#define TRACK_ENTRY 68u
#define PLAY_ENTRY 8u
#define BLOCK_ENTRY 12u
#define PICTURE_ENTRY 28u
#define MARK_ENTRY 8u
#define CHANGES_PER_BLOCK 32u
#define DARK 0xFFFFFFFFul
static inline const uint8_t *entry(const glowprog_section *s, uint32_t size, uint32_t i)
{
    return s->p + 4 + (size_t)size * i;
}

/* The last entry of a section whose first u32 is at most k (entry 0 must qualify). */
static inline uint32_t last_at_most(const glowprog_section *s, uint32_t size, uint32_t k)
{
    uint32_t lo = 0, hi = s->count;
    while (hi - lo > 1) {
        uint32_t mid = lo + (hi - lo) / 2;
        if (rd32(entry(s, size, mid)) <= k) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    return lo;
}

/* One colour change, decoded. */
typedef struct {
    uint32_t frame;    /* first frame that shows it */
    uint32_t number;   /* its place in the track's changes, from 0 */
    uint16_t lead;     /* how far before its frame's midpoint the event is, 2^-12 frames */
    const uint8_t *from; /* explicit start colours (6 floats), or NULL */
} change;

/* Walks the changes of block `b` of a track with fades (`fades`): the last one
 * whose frame is at most k (or, with k = DARK, every one, for validation).
 * Returns 0 when the stream is malformed. Defined in glowscore_program_open.c. */
int glowprog_internal_scan_block(const glowprog *p, uint32_t b, uint32_t in_block, int fades, uint32_t k,
                                 change *out);

#endif /* GLOWSCORE_PROGRAM_INTERNAL_H */
