/* glowscore_table.h: reference decoder for glowscore binary frame tables.
 *
 * Portable C99, no allocation, no mutable state outside the caller's structs.
 * Reads both binary forms from a byte buffer (in RAM or memory-mapped flash):
 *   full    (magic "GSTF"): every frame stored, see full-table.md
 *   compact (magic "GSTC"): literal runs, holds and linear fades, see compact-table.md
 *
 * Use:
 *   glowtab t;
 *   if (glowtab_open(&t, table, table_size) != GLOWTAB_OK) { ... refuse ... }
 *   glowtab_read_frame(&t, k, leds, sizeof leds);   // frame k, wire order
 *
 * glowtab_open checks the header, the length, the CRC-32, the resync marks
 * (version 2) and (compact) the segment index once; every later read is then
 * bounded and cannot fail except for a frame number past the end or a buffer
 * that is too small. Versions 1 and 2 are read; version 1 has no marks.
 */
#ifndef GLOWSCORE_TABLE_H
#define GLOWSCORE_TABLE_H

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

/** Result of every call. */
typedef enum {
    GLOWTAB_OK = 0,        /**< done */
    GLOWTAB_ERR_ARG,       /**< a null pointer was passed */
    GLOWTAB_ERR_SHORT,     /**< fewer bytes than a header and trailer */
    GLOWTAB_ERR_MAGIC,     /**< not "GSTF" nor "GSTC" */
    GLOWTAB_ERR_VERSION,   /**< a format version other than 1 and 2 */
    GLOWTAB_ERR_HEADER,    /**< a header field out of range or inconsistent */
    GLOWTAB_ERR_FLAGS,     /**< a required flag bit (0..15) this decoder does not know */
    GLOWTAB_ERR_LENGTH,    /**< buffer length differs from header + data + index + trailer */
    GLOWTAB_ERR_CRC,       /**< CRC-32 mismatch: the table is damaged */
    GLOWTAB_ERR_INDEX,     /**< compact segment index inconsistent */
    GLOWTAB_ERR_FRAME,     /**< frame number past the last frame */
    GLOWTAB_ERR_BUFFER,    /**< output buffer smaller than one frame */
    GLOWTAB_ERR_MARKS      /**< version-2 resync marks inconsistent */
} glowtab_status;

/** An opened, validated table. Fields are read-only for the caller. */
typedef struct {
    const uint8_t *data;     /**< first byte of the data area */
    const uint8_t *index;    /**< first segment index entry (compact only) */
    uint32_t data_len;       /**< bytes in the data area */
    uint32_t segment_count;  /**< index entries (0 for a full table) */
    uint32_t frame_rate_hz;  /**< frames per second */
    uint32_t led_count;      /**< LEDs per frame */
    uint32_t frame_count;    /**< frames in the table */
    uint32_t frame_size;     /**< bytes per frame = led_count * bytes_per_led */
    uint32_t crc32;          /**< CRC-32 stored in the trailer */
    uint8_t bytes_per_led;   /**< 3, or 4 with a white channel */
    uint8_t is_compact;      /**< 1 for "GSTC", 0 for "GSTF" */
    char order[5];           /**< channel order on the wire, e.g. "GRB", "RGBW" */
    uint16_t version;        /**< format version: 1, or 2 with resync marks */
    uint32_t mark_count;     /**< resync marks (0 in version 1) */
    const uint8_t *marks;    /**< the first mark in the header, 8 bytes each */
} glowtab;

/** Validates buf[0..len) as a full or compact table (CRC included) and fills *t. */
glowtab_status glowtab_open(glowtab *t, const uint8_t *buf, size_t len);

/** Writes frame k (from 0) in wire order into out[0..frame_size). */
glowtab_status glowtab_read_frame(const glowtab *t, uint32_t k, uint8_t *out, size_t out_len);

/** Resync mark i (0 .. mark_count - 1): the first frame of a marked bar and
 *  the bar (from 1), in bar order. Returns 0 past the end. */
int glowtab_mark(const glowtab *t, uint32_t i, uint32_t *frame, uint32_t *bar);

/** CRC-32 (IEEE 802.3, reflected, init and final xor 0xFFFFFFFF) of p[0..n),
 *  continuing from crc (pass 0 to start). glowtab_crc32(0, "123456789", 9) == 0xCBF43926. */
uint32_t glowtab_crc32(uint32_t crc, const uint8_t *p, size_t n);

/** A short English name of a status, for logs. */
const char *glowtab_status_text(glowtab_status s);

#ifdef __cplusplus
}
#endif

#endif /* GLOWSCORE_TABLE_H */
