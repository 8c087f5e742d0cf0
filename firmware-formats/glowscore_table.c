/* glowscore_table.c: reference decoder for glowscore binary frame tables (C99).
 * See glowscore_table.h for the interface, full-table.md and compact-table.md
 * for the byte layout this code follows step by step. */
#include "glowscore_table.h"

#define GT_HEADER_LEN 36u  /* version-1 header; longer headers are allowed */
#define GT_MARKS_AT 40u    /* version 2: the mark count at 36, the marks from 40 */
#define GT_MARK_LEN 8u     /* one mark: frame, bar */
#define GT_TRAILER_LEN 12u /* data_len, segment_count, crc32 */
#define GT_ENTRY_LEN 12u   /* one segment index entry */
#define GT_REQUIRED_FLAGS 0x0000FFFFul

#define GT_LITERAL 0u
#define GT_HOLD 1u
#define GT_FADE 2u

static uint16_t rd16(const uint8_t *p)
{
    return (uint16_t)(p[0] | ((uint16_t)p[1] << 8));
}

static uint32_t rd32(const uint8_t *p)
{
    return (uint32_t)p[0] | ((uint32_t)p[1] << 8) | ((uint32_t)p[2] << 16) |
           ((uint32_t)p[3] << 24);
}

/* Two's-complement reading of a stored 32-bit step, without implementation-defined casts. */
static int64_t rd_i32(const uint8_t *p)
{
    uint32_t u = rd32(p);
    int64_t v = (int64_t)u;
    if (u & 0x80000000ul) {
        v -= (int64_t)4294967296LL;
    }
    return v;
}

uint32_t glowtab_crc32(uint32_t crc, const uint8_t *p, size_t n)
{
    /* Reflected polynomial 0xEDB88320, four bits at a time. */
    static const uint32_t nibble[16] = {
        0x00000000ul, 0x1DB71064ul, 0x3B6E20C8ul, 0x26D930ACul,
        0x76DC4190ul, 0x6B6B51F4ul, 0x4DB26158ul, 0x5005713Cul,
        0xEDB88320ul, 0xF00F9344ul, 0xD6D6A3E8ul, 0xCB61B38Cul,
        0x9B64C2B0ul, 0x86D3D2D4ul, 0xA00AE278ul, 0xBDBDF21Cul};
    size_t i;
    crc = ~crc;
    for (i = 0; i < n; i++) {
        crc ^= p[i];
        crc = (crc >> 4) ^ nibble[crc & 15u];
        crc = (crc >> 4) ^ nibble[crc & 15u];
    }
    return ~crc;
}

/* Channel value of frame j of a fade: (a * 65536 + s * j + 32768) >> 16, computed exactly.
 * Returns -1 when the result leaves 0..255 (only possible in a damaged table). */
static int32_t fade_value(uint8_t a, int64_t s, uint32_t j)
{
    int64_t v = (int64_t)a * 65536 + s * (int64_t)j + 32768;
    if (v < 0 || v > (int64_t)255 * 65536 + 65535) {
        return -1;
    }
    return (int32_t)(v / 65536); /* v >= 0: division is the shift */
}

static int order_is_known(const uint8_t *letters, uint8_t bpl)
{
    static const char *const names[8] = {"RGB", "RBG", "GRB", "GBR", "BRG", "BGR", "RGBW", "GRBW"};
    unsigned i, c;
    for (i = 0; i < 8; i++) {
        const char *n = names[i];
        int same = 1;
        for (c = 0; c < 4; c++) {
            uint8_t want = (uint8_t)n[c]; /* 0 past the end of a 3-letter name */
            if (letters[c] != want) {
                same = 0;
                break;
            }
            if (want == 0) {
                break;
            }
        }
        if (same) {
            return (n[3] ? 4 : 3) == bpl;
        }
    }
    return 0;
}

/* First frame after segment i. */
static uint32_t segment_end(const glowtab *t, uint32_t i)
{
    if (i + 1 < t->segment_count) {
        return rd32(t->index + (size_t)(i + 1) * GT_ENTRY_LEN);
    }
    return t->frame_count;
}

static glowtab_status check_index(const glowtab *t)
{
    uint64_t offset = 0;
    uint32_t i, c;
    if ((t->segment_count == 0) != (t->frame_count == 0)) {
        return GLOWTAB_ERR_INDEX;
    }
    for (i = 0; i < t->segment_count; i++) {
        const uint8_t *e = t->index + (size_t)i * GT_ENTRY_LEN;
        uint32_t first = rd32(e);
        uint32_t kind = e[8];
        uint32_t frames;
        uint64_t size;
        if (e[9] != 0 || e[10] != 0 || e[11] != 0 || kind > GT_FADE) {
            return GLOWTAB_ERR_INDEX;
        }
        if (i == 0 ? first != 0 : first <= rd32(e - GT_ENTRY_LEN)) {
            return GLOWTAB_ERR_INDEX;
        }
        if (first >= t->frame_count || rd32(e + 4) != offset) {
            return GLOWTAB_ERR_INDEX;
        }
        if (segment_end(t, i) <= first) {
            return GLOWTAB_ERR_INDEX;
        }
        frames = segment_end(t, i) - first; /* >= 1 */
        if (kind == GT_LITERAL) {
            size = (uint64_t)frames * t->frame_size;
        } else if (kind == GT_HOLD) {
            size = t->frame_size;
        } else {
            size = (uint64_t)5 * t->frame_size;
        }
        if (offset + size > t->data_len) {
            return GLOWTAB_ERR_INDEX;
        }
        if (kind == GT_FADE) {
            /* The rule is monotone in j: both ends inside 0..255 keep every frame inside. */
            const uint8_t *a = t->data + (size_t)offset;
            const uint8_t *s = a + t->frame_size;
            for (c = 0; c < t->frame_size; c++) {
                if (fade_value(a[c], rd_i32(s + 4u * c), frames - 1) < 0) {
                    return GLOWTAB_ERR_INDEX;
                }
            }
        }
        offset += size;
    }
    return offset == t->data_len ? GLOWTAB_OK : GLOWTAB_ERR_INDEX;
}

/* Version 2: the mark count at offset 36, then the marks, inside the header;
 * frames below frame_count and not decreasing, bars from 1 and increasing. */
static glowtab_status check_marks(glowtab *t, const uint8_t *buf, uint32_t header_len)
{
    uint32_t i, count;
    if (header_len < GT_MARKS_AT) {
        return GLOWTAB_ERR_HEADER;
    }
    count = rd32(buf + GT_HEADER_LEN);
    if ((uint64_t)GT_MARKS_AT + (uint64_t)count * GT_MARK_LEN > header_len) {
        return GLOWTAB_ERR_MARKS;
    }
    for (i = 0; i < count; i++) {
        const uint8_t *m = buf + GT_MARKS_AT + (size_t)i * GT_MARK_LEN;
        uint32_t frame = rd32(m), bar = rd32(m + 4);
        if (frame >= t->frame_count || bar == 0 ||
            (i > 0 && (frame < rd32(m - GT_MARK_LEN) || bar <= rd32(m - GT_MARK_LEN + 4)))) {
            return GLOWTAB_ERR_MARKS;
        }
    }
    t->mark_count = count;
    t->marks = buf + GT_MARKS_AT;
    return GLOWTAB_OK;
}

glowtab_status glowtab_open(glowtab *t, const uint8_t *buf, size_t len)
{
    uint32_t header_len, bpl, data_len, segment_count, stored;
    uint64_t expected;
    const uint8_t *tr;
    if (t == NULL || buf == NULL) {
        return GLOWTAB_ERR_ARG;
    }
    if (len < GT_HEADER_LEN + GT_TRAILER_LEN) {
        return GLOWTAB_ERR_SHORT;
    }
    if (buf[0] != 'G' || buf[1] != 'S' || buf[2] != 'T' || (buf[3] != 'F' && buf[3] != 'C')) {
        return GLOWTAB_ERR_MAGIC;
    }
    t->is_compact = (uint8_t)(buf[3] == 'C');
    t->version = rd16(buf + 4);
    t->mark_count = 0;
    t->marks = NULL;
    if (t->version != 1 && t->version != 2) {
        return GLOWTAB_ERR_VERSION;
    }
    header_len = rd16(buf + 6);
    if (header_len < GT_HEADER_LEN) {
        return GLOWTAB_ERR_HEADER;
    }
    if ((uint64_t)header_len + GT_TRAILER_LEN > (uint64_t)len) {
        return GLOWTAB_ERR_SHORT;
    }
    if (rd32(buf + 8) & GT_REQUIRED_FLAGS) {
        return GLOWTAB_ERR_FLAGS;
    }
    t->frame_rate_hz = rd32(buf + 12);
    t->led_count = rd32(buf + 16);
    t->frame_count = rd32(buf + 20);
    bpl = buf[24];
    if (t->frame_rate_hz == 0 || t->led_count == 0) {
        return GLOWTAB_ERR_HEADER;
    }
    if (buf[25] != 0 || buf[26] != 0 || buf[27] != 0 || !order_is_known(buf + 28, (uint8_t)bpl)) {
        return GLOWTAB_ERR_HEADER;
    }
    t->bytes_per_led = (uint8_t)bpl;
    t->order[0] = (char)buf[28];
    t->order[1] = (char)buf[29];
    t->order[2] = (char)buf[30];
    t->order[3] = (char)buf[31];
    t->order[4] = '\0';
    t->frame_size = rd32(buf + 32);
    if ((uint64_t)t->frame_size != (uint64_t)t->led_count * bpl) {
        return GLOWTAB_ERR_HEADER;
    }

    tr = buf + len - GT_TRAILER_LEN;
    data_len = rd32(tr);
    segment_count = rd32(tr + 4);
    stored = rd32(tr + 8);
    expected = (uint64_t)header_len + data_len + (uint64_t)GT_ENTRY_LEN * segment_count +
               GT_TRAILER_LEN;
    if (expected != (uint64_t)len) {
        return GLOWTAB_ERR_LENGTH;
    }
    if (glowtab_crc32(0, buf, len - 4) != stored) {
        return GLOWTAB_ERR_CRC;
    }
    t->crc32 = stored;
    if (t->version == 2) {
        glowtab_status s = check_marks(t, buf, header_len);
        if (s != GLOWTAB_OK) {
            return s;
        }
    }
    t->data = buf + header_len;
    t->data_len = data_len;
    t->index = t->data + data_len;
    t->segment_count = segment_count;
    if (!t->is_compact) {
        if (segment_count != 0 ||
            (uint64_t)data_len != (uint64_t)t->frame_size * t->frame_count) {
            return GLOWTAB_ERR_HEADER;
        }
        return GLOWTAB_OK;
    }
    return check_index(t);
}

glowtab_status glowtab_read_frame(const glowtab *t, uint32_t k, uint8_t *out, size_t out_len)
{
    uint32_t lo, hi, j, c, kind;
    const uint8_t *e, *d;
    if (t == NULL || out == NULL) {
        return GLOWTAB_ERR_ARG;
    }
    if (k >= t->frame_count) {
        return GLOWTAB_ERR_FRAME;
    }
    if (out_len < t->frame_size) {
        return GLOWTAB_ERR_BUFFER;
    }
    if (!t->is_compact) {
        d = t->data + (size_t)k * t->frame_size;
        for (c = 0; c < t->frame_size; c++) {
            out[c] = d[c];
        }
        return GLOWTAB_OK;
    }
    /* Binary search: the last segment whose first frame is <= k (entry 0 starts at 0). */
    lo = 0;
    hi = t->segment_count;
    while (hi - lo > 1) {
        uint32_t mid = lo + (hi - lo) / 2;
        if (rd32(t->index + (size_t)mid * GT_ENTRY_LEN) <= k) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    e = t->index + (size_t)lo * GT_ENTRY_LEN;
    j = k - rd32(e);
    d = t->data + rd32(e + 4);
    kind = e[8];
    if (kind == GT_LITERAL) {
        d += (size_t)j * t->frame_size;
    }
    if (kind != GT_FADE) {
        for (c = 0; c < t->frame_size; c++) {
            out[c] = d[c];
        }
        return GLOWTAB_OK;
    }
    for (c = 0; c < t->frame_size; c++) {
        int32_t v = fade_value(d[c], rd_i32(d + t->frame_size + 4u * c), j);
        if (v < 0) {
            return GLOWTAB_ERR_INDEX; /* cannot happen after glowtab_open */
        }
        out[c] = (uint8_t)v;
    }
    return GLOWTAB_OK;
}

int glowtab_mark(const glowtab *t, uint32_t i, uint32_t *frame, uint32_t *bar)
{
    const uint8_t *m;
    if (t == NULL || frame == NULL || bar == NULL || i >= t->mark_count) {
        return 0;
    }
    m = t->marks + (size_t)i * GT_MARK_LEN;
    *frame = rd32(m);
    *bar = rd32(m + 4);
    return 1;
}

const char *glowtab_status_text(glowtab_status s)
{
    switch (s) {
    case GLOWTAB_OK: return "ok";
    case GLOWTAB_ERR_ARG: return "null argument";
    case GLOWTAB_ERR_SHORT: return "table too short";
    case GLOWTAB_ERR_MAGIC: return "not a glowscore table";
    case GLOWTAB_ERR_VERSION: return "unsupported version";
    case GLOWTAB_ERR_HEADER: return "bad header";
    case GLOWTAB_ERR_FLAGS: return "unknown required flags";
    case GLOWTAB_ERR_LENGTH: return "length mismatch";
    case GLOWTAB_ERR_CRC: return "CRC mismatch";
    case GLOWTAB_ERR_INDEX: return "bad segment index";
    case GLOWTAB_ERR_FRAME: return "frame out of range";
    case GLOWTAB_ERR_BUFFER: return "buffer too small";
    case GLOWTAB_ERR_MARKS: return "bad resync marks";
    }
    return "unknown status";
}
