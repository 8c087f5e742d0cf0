/* glowscore_program.h: reference player of the glowscore program form ("GSPR").
 *
 * Portable C99: no allocation, no mutable state outside the caller's structs,
 * single-precision float and 64-bit integers, no maths library at all (its
 * own sine and cosine). See program-form.md for every byte.
 *
 * Use:
 *   glowprog p;
 *   if (glowprog_open(&p, bytes, size) != GLOWPROG_OK) { ... refuse ... }
 *   glowprog_frame(&p, k, leds, sizeof leds);   // frame k, wire order
 *
 * glowprog_open checks the header, the length, the CRC-32 and every section
 * once; every frame is then computed in bounded time (see program-form.md:
 * binary searches over the frame stretches, at most 32 change records, and a
 * fixed amount of work per LED) and cannot fail except for a frame number
 * past the end or a buffer that is too small.
 */
#ifndef GLOWSCORE_PROGRAM_H
#define GLOWSCORE_PROGRAM_H

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

/** Result of every call. */
typedef enum {
    GLOWPROG_OK = 0,      /**< done */
    GLOWPROG_ERR_ARG,     /**< a null pointer was passed */
    GLOWPROG_ERR_SHORT,   /**< fewer bytes than a header and trailer */
    GLOWPROG_ERR_MAGIC,   /**< not "GSPR" */
    GLOWPROG_ERR_VERSION, /**< a version other than 1 */
    GLOWPROG_ERR_HEADER,  /**< a header field out of range or inconsistent */
    GLOWPROG_ERR_FLAGS,   /**< a required flag bit (0..15) this player does not know */
    GLOWPROG_ERR_LENGTH,  /**< buffer length differs from header + sections + trailer */
    GLOWPROG_ERR_CRC,     /**< CRC-32 mismatch: the program is damaged */
    GLOWPROG_ERR_SECTION, /**< a section missing, repeated or inconsistent */
    GLOWPROG_ERR_FRAME,   /**< frame number past the last frame */
    GLOWPROG_ERR_BUFFER   /**< output buffer smaller than one frame */
} glowprog_status;

/** One section found by glowprog_open: its payload and the entries it counts. */
typedef struct {
    const uint8_t *p; /**< first payload byte */
    uint32_t len;     /**< payload bytes */
    uint32_t count;   /**< the section's leading count */
} glowprog_section;

/** An opened, validated program. Fields are read-only for the caller. */
typedef struct {
    uint32_t frame_rate_hz;  /**< frames per second */
    uint32_t led_count;      /**< LEDs per frame */
    uint32_t frame_count;    /**< frames in the show */
    uint32_t frame_size;     /**< bytes per frame = led_count * bytes_per_led */
    uint32_t crc32;          /**< CRC-32 stored in the trailer */
    uint32_t beats_per_bar;  /**< beats in every bar */
    float brightness;        /**< scale on linear light, 0..1 */
    float tether_m;          /**< tether (or rod) length, metres: where the head rests */
    uint8_t bytes_per_led;   /**< 3, or 4 with a white channel */
    char order[5];           /**< channel order on the wire, e.g. "GRB", "RGBW" */
    glowprog_section tempo, leds, spans, rotors, colours, tracks, play, blocks, pictures;
    const uint8_t *stream;   /**< the change stream */
    uint32_t stream_len;     /**< its bytes */
    const uint8_t *texels;   /**< the pictures' texels */
    uint32_t texel_len;      /**< their bytes */
    glowprog_section marks;  /**< resync marks (count 0 when the program has none) */
} glowprog;

/** Validates buf[0..len) as a program form (CRC included) and fills *p. */
glowprog_status glowprog_open(glowprog *p, const uint8_t *buf, size_t len);

/** Computes frame k (from 0) in wire order into out[0..frame_size). */
glowprog_status glowprog_frame(const glowprog *p, uint32_t k, uint8_t *out, size_t out_len);

/** The global beat at the midpoint of frame k, in 2^-32 beats (beat 0 is bar 1 beat 1). */
int64_t glowprog_beat_of_frame(const glowprog *p, uint32_t k);

/** The head's place (up, right in the plane, metres from the anchor) and
 *  velocity (metres per beat) at global beat `beat` (2^-32 beats); the head
 *  hangs straight down from the anchor while the prop rests. Returns 1 while a
 *  motion span plays, 0 at rest. */
int glowprog_head_at_beat(const glowprog *p, int64_t beat, float pos[2], float vel[2]);

/** The resync marks: the first frame of each marked bar, in order, and its bar
 *  (from 1). i runs from 0 to p->marks.count - 1; returns 0 past the end. */
int glowprog_mark(const glowprog *p, uint32_t i, uint32_t *frame, uint32_t *bar);

/** IEC 61966-2-1 decode of an 8-bit sRGB code to linear light, single precision. */
float glowprog_srgb_to_linear(uint8_t code);

/** CRC-32 (IEEE 802.3, reflected, init and final xor 0xFFFFFFFF) of p[0..n),
 *  continuing from crc (pass 0 to start). glowprog_crc32(0, "123456789", 9) == 0xCBF43926. */
uint32_t glowprog_crc32(uint32_t crc, const uint8_t *p, size_t n);

/** A short English name of a status, for logs. */
const char *glowprog_status_text(glowprog_status s);

#ifdef __cplusplus
}
#endif

#endif /* GLOWSCORE_PROGRAM_H */
