/* glowscore_program_open.c: the reference player's container half; see program-form.md.
 *
 * glowprog_open: the header, the length, the CRC-32, the section list and every
 * section's own checks (the change stream walked once); the resync marks; the
 * CRC-32 and the status names. The frames are computed in glowscore_program.c.
 * C99, no allocation, no global mutable state; every multi-byte field is read a
 * byte at a time (no alignment needed).
 */
#include "glowscore_program_internal.h"

uint32_t glowprog_crc32(uint32_t crc, const uint8_t *p, size_t n)
{
    size_t i;
    int b;
    crc = ~crc;
    for (i = 0; i < n; i++) {
        crc ^= p[i];
        for (b = 0; b < 8; b++) {
            crc = (crc & 1u) ? (crc >> 1) ^ 0xEDB88320ul : crc >> 1;
        }
    }
    return ~crc & 0xFFFFFFFFul;
}

const char *glowprog_status_text(glowprog_status s)
{
    switch (s) {
    case GLOWPROG_OK: return "ok";
    case GLOWPROG_ERR_ARG: return "null argument";
    case GLOWPROG_ERR_SHORT: return "too short";
    case GLOWPROG_ERR_MAGIC: return "not a program form";
    case GLOWPROG_ERR_VERSION: return "unsupported version";
    case GLOWPROG_ERR_HEADER: return "bad header";
    case GLOWPROG_ERR_FLAGS: return "unknown required flags";
    case GLOWPROG_ERR_LENGTH: return "length mismatch";
    case GLOWPROG_ERR_CRC: return "CRC mismatch";
    case GLOWPROG_ERR_SECTION: return "bad section";
    case GLOWPROG_ERR_FRAME: return "frame out of range";
    case GLOWPROG_ERR_BUFFER: return "buffer too small";
    }
    return "unknown status";
}

/* A counted section: count u32, then count entries of `entry` bytes (and, for
 * CHNG and PICT, a trailing byte area that open checks on its own). */
static int counted(glowprog_section *s, uint32_t entry, int exact)
{
    uint64_t need;
    if (s->p == NULL || s->len < 4) {
        return 0;
    }
    s->count = rd32(s->p);
    need = 4 + (uint64_t)s->count * entry;
    if (exact ? need != s->len : need > s->len) {
        return 0;
    }
    return 1;
}

/* Reads a varint at *pos, within [0, end). Returns 0 on overrun. */
static int varint(const uint8_t *p, uint32_t end, uint32_t *pos, uint64_t *v)
{
    uint64_t x = 0;
    int shift = 0;
    while (*pos < end && shift < 64) {
        uint8_t b = p[(*pos)++];
        x |= (uint64_t)(b & 0x7F) << shift;
        if (!(b & 0x80)) {
            *v = x;
            return 1;
        }
        shift += 7;
    }
    return 0;
}

/* Declared in glowscore_program_internal.h. */
int glowprog_internal_scan_block(const glowprog *p, uint32_t b, uint32_t in_block, int fades, uint32_t k,
                                 change *out)
{
    const uint8_t *e = entry(&p->blocks, BLOCK_ENTRY, b);
    uint32_t frame = rd32(e);
    uint32_t pos = rd32(e + 4);
    uint32_t first = rd32(e + 8);
    uint32_t j;
    for (j = 0; j < in_block; j++) {
        uint64_t v;
        change c;
        if (!varint(p->stream, p->stream_len, &pos, &v)) {
            return 0;
        }
        c.lead = 0;
        if (fades) {
            c.lead = (uint16_t)((v >> 1) & 0xFFFu);
            v = ((v >> 13) << 1) | (v & 1u);
        }
        if ((v >> 1) > 0xFFFFFFFFull - frame) {
            return 0;
        }
        frame += (uint32_t)(v >> 1);
        c.frame = frame;
        c.number = first + j;
        c.from = NULL;
        if (v & 1) {
            if (pos + 24 > p->stream_len) {
                return 0;
            }
            c.from = p->stream + pos;
            pos += 24;
        }
        if (j == 0 && c.frame != rd32(e)) {
            return 0;
        }
        if (c.frame > k) {
            break;
        }
        *out = c;
    }
    return 1;
}

static glowprog_status check_sections(glowprog *p)
{
    uint32_t i;
    uint32_t prev = 0;
    if (!counted(&p->tempo, TEMPO_ENTRY, 1) || p->tempo.count == 0 ||
        rd32(entry(&p->tempo, TEMPO_ENTRY, 0)) != 0) {
        return GLOWPROG_ERR_SECTION;
    }
    for (i = 0; i < p->tempo.count; i++) {
        uint32_t f = rd32(entry(&p->tempo, TEMPO_ENTRY, i));
        if (f < prev || (rdu64(entry(&p->tempo, TEMPO_ENTRY, i) + 12) >> 63)) {
            return GLOWPROG_ERR_SECTION;
        }
        prev = f;
    }
    if (!counted(&p->leds, LED_ENTRY, 1) || p->leds.count != p->led_count ||
        !counted(&p->rotors, ROTOR_ENTRY, 1) || !counted(&p->spans, SPAN_ENTRY, 1) ||
        !counted(&p->colours, COLOUR_ENTRY, 1) || !counted(&p->tracks, TRACK_ENTRY, 1) ||
        !counted(&p->play, PLAY_ENTRY, 1) || p->play.count == 0) {
        return GLOWPROG_ERR_SECTION;
    }
    prev = 0;
    for (i = 0; i < p->spans.count; i++) {
        const uint8_t *s = entry(&p->spans, SPAN_ENTRY, i);
        uint32_t a = rd32(s), b = rd32(s + 4);
        if (a < prev || b < a || b > p->frame_count ||
            (uint64_t)rd32(s + 40) + s[44] + 1 > p->rotors.count) {
            return GLOWPROG_ERR_SECTION;
        }
        prev = b;
    }
    for (i = 0; i < p->play.count; i++) {
        const uint8_t *e = entry(&p->play, PLAY_ENTRY, i);
        uint32_t t = rd32(e + 4);
        if ((i == 0 ? rd32(e) != 0 : rd32(e) <= rd32(e - PLAY_ENTRY)) ||
            (t != DARK && t >= p->tracks.count)) {
            return GLOWPROG_ERR_SECTION;
        }
    }
    /* CHNG: blocks, then the stream. */
    if (!counted(&p->blocks, BLOCK_ENTRY, 0)) {
        return GLOWPROG_ERR_SECTION;
    }
    {
        uint64_t at = 4 + (uint64_t)p->blocks.count * BLOCK_ENTRY;
        if (at + 4 > p->blocks.len || at + 4 + rd32(p->blocks.p + at) != p->blocks.len) {
            return GLOWPROG_ERR_SECTION;
        }
        p->stream_len = rd32(p->blocks.p + at);
        p->stream = p->blocks.p + at + 4;
    }
    /* PICT: entries, then the texels. */
    if (!counted(&p->pictures, PICTURE_ENTRY, 0)) {
        return GLOWPROG_ERR_SECTION;
    }
    {
        uint64_t at = 4 + (uint64_t)p->pictures.count * PICTURE_ENTRY;
        if (at + 4 > p->pictures.len || at + 4 + rd32(p->pictures.p + at) != p->pictures.len) {
            return GLOWPROG_ERR_SECTION;
        }
        p->texel_len = rd32(p->pictures.p + at);
        p->texels = p->pictures.p + at + 4;
        for (i = 0; i < p->pictures.count; i++) {
            const uint8_t *e = entry(&p->pictures, PICTURE_ENTRY, i);
            uint32_t w = rd32(e), h = rd32(e + 4), x0 = rd32(e + 8), y0 = rd32(e + 12);
            uint32_t cw = rd32(e + 16), ch = rd32(e + 20), off = rd32(e + 24);
            if (w == 0 || h == 0 || (uint64_t)x0 + cw > w || (uint64_t)y0 + ch > h ||
                w > 0x7FFFFFF || h > 0x7FFFFFF ||
                (uint64_t)off + (uint64_t)cw * ch * 4 > p->texel_len) {
                return GLOWPROG_ERR_SECTION;
            }
        }
    }
    for (i = 0; i < p->tracks.count; i++) {
        const uint8_t *t = entry(&p->tracks, TRACK_ENTRY, i);
        uint8_t kind = t[8];
        if (rd32(t + 4) < rd32(t) || kind > 3) {
            return GLOWPROG_ERR_SECTION;
        }
        if (kind == 3) {
            if (rd32(t + 12) >= p->pictures.count) {
                return GLOWPROG_ERR_SECTION;
            }
        } else {
            uint32_t first = rd32(t + 12), n = rd32(t + 16), changes = rd32(t + 20);
            uint32_t b0 = rd32(t + 24), nb = (changes + CHANGES_PER_BLOCK - 1) / CHANGES_PER_BLOCK;
            uint32_t b;
            if (n == 0 || n > 0xFFFF || (uint64_t)first + n > p->colours.count || changes == 0 ||
                (uint64_t)b0 + nb > p->blocks.count || rdi64(t + 28) < 0 ||
                (kind == 2 && rdi64(t + 52) <= 0)) {
                return GLOWPROG_ERR_SECTION;
            }
            for (b = 0; b < nb; b++) {
                change c;
                uint32_t in_block = b + 1 < nb ? CHANGES_PER_BLOCK : changes - b * CHANGES_PER_BLOCK;
                const uint8_t *e = entry(&p->blocks, BLOCK_ENTRY, b0 + b);
                if (rd32(e + 8) != b * CHANGES_PER_BLOCK ||
                    !glowprog_internal_scan_block(p, b0 + b, in_block, rdi64(t + 28) > 0, DARK, &c)) {
                    return GLOWPROG_ERR_SECTION;
                }
            }
        }
    }
    if (p->marks.p != NULL && !counted(&p->marks, MARK_ENTRY, 1)) {
        return GLOWPROG_ERR_SECTION;
    }
    return GLOWPROG_OK;
}

glowprog_status glowprog_open(glowprog *p, const uint8_t *buf, size_t len)
{
    uint32_t header_len, flags, data_len, sections, pos, i;
    static const char *const orders[8] = {"RGB", "RBG", "GRB", "GBR", "BRG", "BGR", "RGBW", "GRBW"};
    int known = 0;
    if (p == NULL || buf == NULL) {
        return GLOWPROG_ERR_ARG;
    }
    memset(p, 0, sizeof *p);
    if (len < 48) {
        return GLOWPROG_ERR_SHORT;
    }
    if (memcmp(buf, "GSPR", 4) != 0) {
        return GLOWPROG_ERR_MAGIC;
    }
    if (rd16(buf + 4) != 1) {
        return GLOWPROG_ERR_VERSION;
    }
    header_len = rd16(buf + 6);
    if (header_len < 36 || (uint64_t)header_len + 12 > len) {
        return GLOWPROG_ERR_HEADER;
    }
    flags = rd32(buf + 8);
    if (flags & 0xFFFFu) {
        return GLOWPROG_ERR_FLAGS;
    }
    p->frame_rate_hz = rd32(buf + 12);
    p->led_count = rd32(buf + 16);
    p->frame_count = rd32(buf + 20);
    p->bytes_per_led = buf[24];
    memcpy(p->order, buf + 28, 4);
    p->order[4] = '\0';
    p->frame_size = rd32(buf + 32);
    for (i = 0; i < 8; i++) {
        if (memcmp(buf + 28, orders[i], 4) == 0 ||
            (strlen(orders[i]) == 3 && memcmp(buf + 28, orders[i], 3) == 0 && buf[31] == 0)) {
            known = strlen(orders[i]) == p->bytes_per_led;
        }
    }
    if (p->frame_rate_hz == 0 || p->led_count == 0 || buf[25] || buf[26] || buf[27] || !known ||
        (uint64_t)p->led_count * p->bytes_per_led != p->frame_size) {
        return GLOWPROG_ERR_HEADER;
    }
    data_len = rd32(buf + len - 12);
    sections = rd32(buf + len - 8);
    if ((uint64_t)header_len + data_len + 12 != len) {
        return GLOWPROG_ERR_LENGTH;
    }
    p->crc32 = rd32(buf + len - 4);
    if (glowprog_crc32(0, buf, len - 4) != p->crc32) {
        return GLOWPROG_ERR_CRC;
    }
    pos = header_len;
    for (i = 0; i < sections; i++) {
        glowprog_section *s = NULL;
        const uint8_t *tag;
        uint32_t slen;
        if ((uint64_t)pos + 8 > header_len + (uint64_t)data_len) {
            return GLOWPROG_ERR_SECTION;
        }
        tag = buf + pos;
        slen = rd32(buf + pos + 4);
        if ((uint64_t)pos + 8 + slen > header_len + (uint64_t)data_len) {
            return GLOWPROG_ERR_SECTION;
        }
        if (memcmp(tag, "PROP", 4) == 0) {
            if (slen < 12 || p->beats_per_bar != 0) {
                return GLOWPROG_ERR_SECTION;
            }
            p->brightness = rdf32(buf + pos + 8);
            p->beats_per_bar = rd32(buf + pos + 12);
            p->tether_m = rdf32(buf + pos + 16);
            if (p->beats_per_bar == 0) {
                return GLOWPROG_ERR_SECTION;
            }
        } else if (memcmp(tag, "TEMP", 4) == 0) {
            s = &p->tempo;
        } else if (memcmp(tag, "LEDS", 4) == 0) {
            s = &p->leds;
        } else if (memcmp(tag, "SPAN", 4) == 0) {
            s = &p->spans;
        } else if (memcmp(tag, "ROTR", 4) == 0) {
            s = &p->rotors;
        } else if (memcmp(tag, "COLR", 4) == 0) {
            s = &p->colours;
        } else if (memcmp(tag, "TRAK", 4) == 0) {
            s = &p->tracks;
        } else if (memcmp(tag, "PLAY", 4) == 0) {
            s = &p->play;
        } else if (memcmp(tag, "CHNG", 4) == 0) {
            s = &p->blocks;
        } else if (memcmp(tag, "PICT", 4) == 0) {
            s = &p->pictures;
        } else if (memcmp(tag, "MARK", 4) == 0) {
            s = &p->marks;
        }
        /* Other tags are sections of a later version: skipped. */
        if (s != NULL) {
            if (s->p != NULL) {
                return GLOWPROG_ERR_SECTION;
            }
            s->p = buf + pos + 8;
            s->len = slen;
        }
        pos += 8 + slen;
    }
    if (pos != header_len + data_len || p->beats_per_bar == 0) {
        return GLOWPROG_ERR_SECTION;
    }
    return check_sections(p);
}

int glowprog_mark(const glowprog *p, uint32_t i, uint32_t *frame, uint32_t *bar)
{
    const uint8_t *e;
    if (p->marks.p == NULL || i >= p->marks.count) {
        return 0;
    }
    e = entry(&p->marks, MARK_ENTRY, i);
    *frame = rd32(e);
    *bar = rd32(e + 4);
    return 1;
}
