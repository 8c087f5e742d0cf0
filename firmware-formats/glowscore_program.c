/* glowscore_program.c: reference player of the program form; see program-form.md.
 *
 * C99, no allocation, no global mutable state, no maths library: single-precision
 * float for colours and places, 64-bit integers for beats and phases (so that a
 * phase stays exact over hours), its own sine and cosine. Every multi-byte field is
 * read a byte at a time (no alignment needed).
 */
#include "glowscore_program_internal.h"

/* ---- sRGB decode (IEC 61966-2-1), one entry per 8-bit code ------------------ */

/* GLOWPROG_SRGB[v]: ((v/255 + 0.055) / 1.055)^2.4, or v/255 / 12.92 up to v/255 = 0.04045
 * (IEC 61966-2-1), rounded to single precision; the compiler decodes picture texels with
 * the same values (a test compares them bit for bit). */
static const float GLOWPROG_SRGB[256] = {
    0.0f, 0.000303526991f, 0.000607053982f, 0.000910580973f, 0.00121410796f, 0.00151763496f,
    0.00182116195f, 0.00212468882f, 0.00242821593f, 0.0027317428f, 0.00303526991f, 0.00334653584f,
    0.00367650739f, 0.00402471703f, 0.00439144205f, 0.00477695325f, 0.00518151652f, 0.00560539169f,
    0.00604883302f, 0.00651209056f, 0.00699541019f, 0.00749903219f, 0.00802319311f, 0.00856812578f,
    0.00913405884f, 0.00972121768f, 0.010329823f, 0.0109600937f, 0.0116122449f, 0.012286488f,
    0.0129830325f, 0.0137020834f, 0.0144438436f, 0.0152085144f, 0.0159962941f, 0.0168073755f,
    0.0176419541f, 0.01850022f, 0.0193823613f, 0.0202885624f, 0.0212190095f, 0.0221738853f,
    0.0231533665f, 0.0241576321f, 0.0251868591f, 0.0262412224f, 0.0273208916f, 0.02842604f,
    0.0295568351f, 0.0307134446f, 0.0318960324f, 0.0331047662f, 0.0343398079f, 0.0356013142f,
    0.0368894488f, 0.0382043719f, 0.0395462364f, 0.0409151986f, 0.0423114114f, 0.043735031f,
    0.045186203f, 0.0466650873f, 0.0481718257f, 0.0497065671f, 0.0512694567f, 0.0528606474f,
    0.054480277f, 0.0561284907f, 0.0578054301f, 0.0595112368f, 0.0612460524f, 0.0630100146f,
    0.064803265f, 0.0666259378f, 0.0684781671f, 0.0703600943f, 0.0722718537f, 0.0742135718f,
    0.0761853829f, 0.078187421f, 0.0802198201f, 0.0822827071f, 0.0843762085f, 0.0865004584f,
    0.0886555836f, 0.0908417106f, 0.0930589661f, 0.0953074694f, 0.097587347f, 0.0998987257f,
    0.102241732f, 0.104616486f, 0.107023105f, 0.10946171f, 0.111932427f, 0.114435375f,
    0.116970666f, 0.119538426f, 0.122138776f, 0.124771819f, 0.127437681f, 0.130136475f,
    0.13286832f, 0.135633335f, 0.138431609f, 0.141263291f, 0.144128472f, 0.147027269f,
    0.149959788f, 0.152926147f, 0.155926466f, 0.158960834f, 0.162029371f, 0.165132195f,
    0.168269396f, 0.171441108f, 0.174647406f, 0.177888423f, 0.18116425f, 0.18447499f,
    0.187820777f, 0.191201687f, 0.194617838f, 0.198069319f, 0.20155625f, 0.205078736f,
    0.208636865f, 0.212230757f, 0.215860501f, 0.219526201f, 0.223227963f, 0.226965874f,
    0.230740055f, 0.23455058f, 0.238397568f, 0.242281124f, 0.246201321f, 0.25015828f,
    0.254152089f, 0.258182853f, 0.262250662f, 0.266355604f, 0.270497799f, 0.274677306f,
    0.278894275f, 0.283148736f, 0.287440836f, 0.291770637f, 0.296138257f, 0.300543785f,
    0.304987311f, 0.309468925f, 0.313988715f, 0.318546772f, 0.323143214f, 0.327778101f,
    0.332451522f, 0.337163627f, 0.341914415f, 0.346704066f, 0.351532608f, 0.356400132f,
    0.361306787f, 0.366252601f, 0.371237695f, 0.376262128f, 0.38132602f, 0.386429429f,
    0.391572475f, 0.396755219f, 0.401977777f, 0.407240212f, 0.412542611f, 0.417885065f,
    0.423267663f, 0.428690493f, 0.434153646f, 0.439657182f, 0.445201188f, 0.450785786f,
    0.456411034f, 0.462076992f, 0.467783809f, 0.473531485f, 0.479320168f, 0.48514995f,
    0.491020858f, 0.496932983f, 0.502886474f, 0.50888133f, 0.514917672f, 0.520995557f,
    0.527115107f, 0.533276379f, 0.539479494f, 0.545724452f, 0.55201143f, 0.558340371f,
    0.564711511f, 0.571124852f, 0.577580452f, 0.584078431f, 0.590618849f, 0.597201765f,
    0.603827357f, 0.610495567f, 0.617206573f, 0.623960376f, 0.630757153f, 0.637596846f,
    0.644479692f, 0.651405632f, 0.658374846f, 0.665387273f, 0.672443151f, 0.679542482f,
    0.686685324f, 0.693871737f, 0.701101899f, 0.708375752f, 0.715693474f, 0.723055124f,
    0.730460763f, 0.73791039f, 0.745404184f, 0.752942204f, 0.760524511f, 0.768151164f,
    0.775822222f, 0.783537805f, 0.791297913f, 0.799102724f, 0.806952238f, 0.814846575f,
    0.822785735f, 0.830769897f, 0.838799f, 0.846873224f, 0.854992628f, 0.863157213f,
    0.871367097f, 0.8796224f, 0.887923121f, 0.896269381f, 0.904661179f, 0.913098633f,
    0.921581864f, 0.930110872f, 0.938685715f, 0.947306514f, 0.955973327f, 0.964686275f,
    0.973445296f, 0.982250571f, 0.991102099f, 1.0f,
};

float glowprog_srgb_to_linear(uint8_t code)
{
    return GLOWPROG_SRGB[code];
}

/* ---- fixed point ------------------------------------------------------------ */

#define ONE32 4294967296.0f        /* 2^32 */
#define MASK48 0xFFFFFFFFFFFFull   /* 2^48 - 1 */

/* x = hi * 2^32 + lo with 0 <= lo < 2^32 (floor split, portable for negatives). */
static void split32(int64_t x, int64_t *hi, uint32_t *lo)
{
    int64_t h = x / 4294967296LL;
    int64_t l = x - h * 4294967296LL;
    if (l < 0) {
        h -= 1;
        l += 4294967296LL;
    }
    *hi = h;
    *lo = (uint32_t)l;
}

/* floor(a * b / 2^32) for a, b in any 32.32-style fixed point, as long as the
 * result fits (the writer guarantees it for every product taken here). */
static int64_t mul_q32(int64_t a, int64_t b)
{
    int64_t ah, bh;
    uint32_t al, bl;
    uint64_t low;
    split32(a, &ah, &al);
    split32(b, &bh, &bl);
    /* a b / 2^32 = ah bh 2^32 + ah bl + al bh + al bl / 2^32 */
    low = ((uint64_t)al * (uint64_t)bl) >> 32;
    return ah * bh * 4294967296LL + ah * (int64_t)bl + (int64_t)al * bh + (int64_t)low;
}

/* The fraction of a turn of rate * x + start, in 2^-48 turns: rate in 2^-48
 * turns a beat, x in 2^-32 beats, start in 2^-32 turns. Exact but for the
 * last bit of the rate*fraction product, whatever the size of x. */
static uint64_t turn48(int64_t rate, int64_t x, uint32_t start)
{
    int64_t xi, rh;
    uint32_t xf, rl;
    uint64_t a, b;
    split32(x, &xi, &xf);
    split32(rate, &rh, &rl);
    /* rate * xi, kept modulo 2^48 (wrapping unsigned product). */
    a = (uint64_t)rate * (uint64_t)xi;
    /* rate * xf / 2^32 = rh xf + rl xf / 2^32 */
    b = (uint64_t)(rh * (int64_t)xf) + (((uint64_t)rl * (uint64_t)xf) >> 32);
    return (a + b + ((uint64_t)start << 16)) & MASK48;
}

/* ---- sine and cosine of a fraction of a turn -------------------------------- */

static float sin_poly(float x)
{
    float x2 = x * x;
    return x * (1.0f + x2 * (-1.0f / 6.0f + x2 * (1.0f / 120.0f + x2 * (-1.0f / 5040.0f + x2 * (1.0f / 362880.0f)))));
}

static float cos_poly(float x)
{
    float x2 = x * x;
    return 1.0f + x2 * (-0.5f + x2 * (1.0f / 24.0f + x2 * (-1.0f / 720.0f + x2 * (1.0f / 40320.0f - x2 * (1.0f / 3628800.0f)))));
}

/* sin and cos of 2 pi f / 2^32: Taylor series on at most an eighth of a turn
 * (error below 2e-9 before rounding), quadrants by symmetry. */
static void sincos_turn(uint32_t f, float *s, float *c)
{
    const float k = 1.57079632679489662f / 1073741824.0f; /* (pi/2) / 2^30 */
    uint32_t q = f >> 30;
    uint32_t t = f & 0x3FFFFFFFul;
    float sx, cx;
    if (t <= 0x20000000ul) {
        float x = (float)t * k;
        sx = sin_poly(x);
        cx = cos_poly(x);
    } else {
        float x = (float)(0x40000000ul - t) * k;
        sx = cos_poly(x);
        cx = sin_poly(x);
    }
    switch (q) {
    case 0: *s = sx; *c = cx; break;
    case 1: *s = cx; *c = -sx; break;
    case 2: *s = -sx; *c = -cx; break;
    default: *s = -cx; *c = sx; break;
    }
}

static void sincos48(uint64_t turn, float *s, float *c)
{
    sincos_turn((uint32_t)(turn >> 16), s, c);
}

/* ---- time ------------------------------------------------------------------- */


/* Beats a frame at frame k, 2^-56 beats. */
static uint64_t step_at(const glowprog *p, uint32_t k)
{
    return rdu64(entry(&p->tempo, TEMPO_ENTRY, last_at_most(&p->tempo, TEMPO_ENTRY, k)) + 12);
}

int64_t glowprog_beat_of_frame(const glowprog *p, uint32_t k)
{
    const uint8_t *e = entry(&p->tempo, TEMPO_ENTRY, last_at_most(&p->tempo, TEMPO_ENTRY, k));
    uint32_t n = k - rd32(e);
    uint64_t step = rdu64(e + 12);
    /* n * step / 2^24, exactly: step = sh 2^32 + sl. */
    uint64_t sh = step >> 32, sl = step & 0xFFFFFFFFull;
    uint64_t d = ((uint64_t)n * sh << 8) + (((uint64_t)n * sl) >> 24);
    return rdi64(e + 4) + (int64_t)d;
}

/* ---- colour ----------------------------------------------------------------- */

typedef struct {
    float l, a, b;
} lab;

static lab colour_lab(const glowprog *p, uint32_t i)
{
    const uint8_t *e = entry(&p->colours, COLOUR_ENTRY, i);
    lab c;
    c.l = rdf32(e + 3);
    c.a = rdf32(e + 7);
    c.b = rdf32(e + 11);
    return c;
}

static lab lab_at(const uint8_t *q)
{
    lab c;
    c.l = rdf32(q);
    c.a = rdf32(q + 4);
    c.b = rdf32(q + 8);
    return c;
}

static int lab_eq(lab x, lab y)
{
    return x.l == y.l && x.a == y.a && x.b == y.b;
}

static lab mix(lab x, lab y, float f)
{
    lab c;
    if (!(f >= 0.0f)) {
        f = 0.0f;
    }
    if (f > 1.0f) {
        f = 1.0f;
    }
    c.l = x.l + (y.l - x.l) * f;
    c.a = x.a + (y.a - x.a) * f;
    c.b = x.b + (y.b - x.b) * f;
    return c;
}

static uint8_t led_byte(float v, float brightness)
{
    float x;
    uint8_t t;
    if (!(v >= 0.0f)) {
        v = v == v ? 0.0f : v; /* NaN stays NaN, to become 0 below */
    }
    if (v > 1.0f) {
        v = 1.0f;
    }
    x = v * brightness;
    if (x != x) {
        return 0;
    }
    if (x < 0.0f) {
        x = 0.0f;
    }
    if (x > 1.0f) {
        x = 1.0f;
    }
    x *= 255.0f;
    t = (uint8_t)x;
    return (x - (float)t >= 0.5f) ? (uint8_t)(t + 1) : t;
}

/* Oklab (Ottosson's published matrices, as the compiler uses them) to LED bytes. */
static void lab_bytes(lab c, float brightness, uint8_t rgb[3])
{
    float l_ = c.l + 0.3963377774f * c.a + 0.2158037573f * c.b;
    float m_ = c.l - 0.1055613458f * c.a - 0.0638541728f * c.b;
    float s_ = c.l - 0.0894841775f * c.a - 1.2914855480f * c.b;
    float l = l_ * l_ * l_, m = m_ * m_ * m_, s = s_ * s_ * s_;
    rgb[0] = led_byte(4.0767416621f * l - 3.3077115913f * m + 0.2309699292f * s, brightness);
    rgb[1] = led_byte(-1.2684380046f * l + 2.6097574011f * m - 0.3413193965f * s, brightness);
    rgb[2] = led_byte(-0.0041960863f * l - 0.7034186147f * m + 1.7076147010f * s, brightness);
}

static void settled(const glowprog *p, uint32_t i, uint8_t rgb[3])
{
    const uint8_t *e = entry(&p->colours, COLOUR_ENTRY, i);
    rgb[0] = e[0];
    rgb[1] = e[1];
    rgb[2] = e[2];
}

/* Writes LED i's bytes in wire order. */
static void put(const glowprog *p, uint8_t *out, uint32_t i, const uint8_t rgb[3])
{
    uint8_t *o = out + (size_t)i * p->bytes_per_led;
    uint8_t r = rgb[0], g = rgb[1], b = rgb[2];
    int k;
    if (p->bytes_per_led == 4) {
        uint8_t w = r < g ? r : g;
        w = w < b ? w : b;
        r = (uint8_t)(r - w);
        g = (uint8_t)(g - w);
        b = (uint8_t)(b - w);
        o[3] = w;
    }
    for (k = 0; k < 3; k++) {
        char ch = p->order[k];
        o[k] = ch == 'R' ? r : ch == 'G' ? g : b;
    }
}

/* ---- motion ----------------------------------------------------------------- */

/* The span playing at frame k, or -1. */
static long span_at_frame(const glowprog *p, uint32_t k)
{
    uint32_t i;
    const uint8_t *s;
    if (p->spans.count == 0) {
        return -1;
    }
    i = last_at_most(&p->spans, SPAN_ENTRY, k);
    s = entry(&p->spans, SPAN_ENTRY, i);
    return (rd32(s) <= k && k < rd32(s + 4)) ? (long)i : -1;
}

/* Sum of the span's rotating terms first .. first + n at x beats (2^-32) past
 * the delay: place and, if vel, velocity per beat. */
static void terms(const glowprog *p, const uint8_t *s, uint32_t n_extra, int64_t x, float pos[2], float vel[2])
{
    uint32_t first = rd32(s + 40), n = s[44] + n_extra, j;
    pos[0] = pos[1] = 0.0f;
    if (vel) {
        vel[0] = vel[1] = 0.0f;
    }
    for (j = 0; j < n; j++) {
        const uint8_t *r = entry(&p->rotors, ROTOR_ENTRY, first + j);
        float sn, cs, a = rdf32(r);
        int64_t rate = rdi64(r + 4);
        sincos48(turn48(rate, x, rd32(r + 12)), &sn, &cs);
        pos[0] += a * cs;
        pos[1] += a * sn;
        if (vel) {
            float w = 6.28318530717958648f * ((float)rate / (ONE32 * 65536.0f));
            vel[0] -= a * w * sn;
            vel[1] += a * w * cs;
        }
    }
}

int glowprog_head_at_beat(const glowprog *p, int64_t beat, float pos[2], float vel[2])
{
    uint32_t i;
    for (i = 0; i < p->spans.count; i++) {
        const uint8_t *s = entry(&p->spans, SPAN_ENTRY, i);
        if (rdi64(s + 8) <= beat && beat < rdi64(s + 16)) {
            terms(p, s, 1, beat - rdi64(s + 8) - rdi64(s + 24), pos, vel);
            return 1;
        }
    }
    /* At rest: the head hangs below the anchor (up = -tether). */
    pos[0] = -p->tether_m;
    pos[1] = 0.0f;
    vel[0] = vel[1] = 0.0f;
    return 0;
}

/* ---- pictures --------------------------------------------------------------- */

typedef struct {
    const uint8_t *tex;
    uint32_t w, h, x0, y0, cw, ch;
} picture;

static void texel(const picture *pic, long x, long y, float t[4])
{
    const uint8_t *q;
    float a;
    if (x < (long)pic->x0 || y < (long)pic->y0 || x >= (long)(pic->x0 + pic->cw) ||
        y >= (long)(pic->y0 + pic->ch)) {
        t[0] = t[1] = t[2] = t[3] = 0.0f;
        return;
    }
    q = pic->tex + 4 * ((size_t)(y - (long)pic->y0) * pic->cw + (size_t)(x - (long)pic->x0));
    a = (float)q[3] / 255.0f;
    t[0] = GLOWPROG_SRGB[q[0]] * a;
    t[1] = GLOWPROG_SRGB[q[1]] * a;
    t[2] = GLOWPROG_SRGB[q[2]] * a;
    t[3] = a;
}

static long floor_long(float v)
{
    long i = (long)v;
    return ((float)i > v) ? i - 1 : i;
}

/* Bilinear sample at continuous pixel coordinates; transparent outside, fading
 * over the half texel at the border (premultiplied linear R, G, B). */
static void sample(const picture *pic, float x, float y, float out[3])
{
    float xs = x - 0.5f, ys = y - 0.5f, fx, fy, a[4], b[4], c[4], d[4];
    long i, j;
    int k;
    if (!(xs > -1.0f && ys > -1.0f && xs < (float)pic->w && ys < (float)pic->h)) {
        out[0] = out[1] = out[2] = 0.0f;
        return;
    }
    i = floor_long(xs);
    j = floor_long(ys);
    fx = xs - (float)i;
    fy = ys - (float)j;
    texel(pic, i, j, a);
    texel(pic, i + 1, j, b);
    texel(pic, i, j + 1, c);
    texel(pic, i + 1, j + 1, d);
    for (k = 0; k < 3; k++) {
        float top = a[k] + (b[k] - a[k]) * fx;
        float bottom = c[k] + (d[k] - c[k]) * fx;
        out[k] = top + (bottom - top) * fy;
    }
}

static void paint(const glowprog *p, const uint8_t *t, uint32_t k, int64_t beat, uint8_t *out)
{
    long si = span_at_frame(p, k);
    const uint8_t *s, *e;
    picture pic;
    float hand[2], dir[2], m[6];
    uint32_t i;
    int64_t x;
    int mirror;
    static const uint8_t dark[3] = {0, 0, 0};
    if (si < 0) {
        for (i = 0; i < p->led_count; i++) {
            put(p, out, i, dark);
        }
        return;
    }
    s = entry(&p->spans, SPAN_ENTRY, (uint32_t)si);
    mirror = s[46] != 0;
    x = beat - rdi64(s + 8) - rdi64(s + 24);
    terms(p, s, 0, x, hand, NULL);
    {
        const uint8_t *r = entry(&p->rotors, ROTOR_ENTRY, rd32(s + 40) + s[44]);
        sincos48(turn48(rdi64(r + 4), x, rd32(r + 12)), &dir[1], &dir[0]);
    }
    for (i = 0; i < 6; i++) {
        m[i] = rdf32(t + 44 + 4 * i);
    }
    if (t[9] == 1) {
        /* Fixed to the hand: turned about the anchor by the hand's phase
         * (the other way on a mirrored placement). */
        float sn, cs, n[6];
        sincos48(turn48(rdi64(s + 32), x, 0), &sn, &cs);
        if (mirror) {
            sn = -sn;
        }
        n[0] = m[0] * cs + m[1] * sn;
        n[1] = m[1] * cs - m[0] * sn;
        n[2] = m[2];
        n[3] = m[3] * cs + m[4] * sn;
        n[4] = m[4] * cs - m[3] * sn;
        n[5] = m[5];
        memcpy(m, n, sizeof m);
    }
    e = entry(&p->pictures, PICTURE_ENTRY, rd32(t + 12));
    pic.w = rd32(e);
    pic.h = rd32(e + 4);
    pic.x0 = rd32(e + 8);
    pic.y0 = rd32(e + 12);
    pic.cw = rd32(e + 16);
    pic.ch = rd32(e + 20);
    pic.tex = p->texels + rd32(e + 24);
    for (i = 0; i < p->led_count; i++) {
        float a = rdf32(entry(&p->leds, LED_ENTRY, i));
        float p0 = hand[0] + a * dir[0], p1 = hand[1] + a * dir[1];
        float qr = mirror ? -p1 : p1, qu = p0;
        float lin[3];
        uint8_t rgb[3];
        sample(&pic, m[0] * qr + m[1] * qu + m[2], m[3] * qr + m[4] * qu + m[5], lin);
        rgb[0] = led_byte(lin[0], p->brightness);
        rgb[1] = led_byte(lin[1], p->brightness);
        rgb[2] = led_byte(lin[2], p->brightness);
        put(p, out, i, rgb);
    }
}

/* ---- stepped colours -------------------------------------------------------- */

static void steps(const glowprog *p, const uint8_t *t, uint32_t k, int64_t beat, uint8_t *out)
{
    uint8_t kind = t[8];
    uint32_t first = rd32(t + 12), n = rd32(t + 16), changes = rd32(t + 20), b0 = rd32(t + 24);
    uint32_t nb = (changes + CHANGES_PER_BLOCK - 1) / CHANGES_PER_BLOCK, lo = 0, hi = nb;
    int64_t fade = rdi64(t + 28);
    uint32_t col, before, i;
    change c;
    int64_t diff;
    int fading;
    float frac;
    lab to[2], from[2], ends[2];
    /* The change frame k shows: the last block starting at or before k, then
     * its last change at or before k. */
    while (hi - lo > 1) {
        uint32_t mid = lo + (hi - lo) / 2;
        if (rd32(entry(&p->blocks, BLOCK_ENTRY, b0 + mid)) <= k) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    c.frame = 0;
    c.number = 0;
    c.lead = 0;
    c.from = NULL;
    (void)glowprog_internal_scan_block(p, b0 + lo,
                                       lo + 1 < nb ? CHANGES_PER_BLOCK : changes - lo * CHANGES_PER_BLOCK,
                                       fade > 0, k, &c);
    col = c.number % n;
    before = c.number == 0 ? 0 : (c.number - 1) % n;
    /* The instant of the change's event: its frame's midpoint less the stored part of a frame. */
    diff = beat - glowprog_beat_of_frame(p, c.frame) + (int64_t)(((step_at(p, c.frame) >> 24) * c.lead) >> 12);
    fading = fade > 0 && diff < fade;
    frac = fade > 0 ? (float)diff / (float)fade : 1.0f;
    to[0] = colour_lab(p, first + col);
    to[1] = kind == 1 ? colour_lab(p, first + (col + 1) % n) : to[0];
    if (c.from != NULL) {
        from[0] = lab_at(c.from);
        from[1] = lab_at(c.from + 12);
    } else {
        from[0] = colour_lab(p, first + before);
        from[1] = kind == 1 ? colour_lab(p, first + (before + 1) % n) : from[0];
    }
    if (kind == 0) {
        uint8_t rgb[3];
        if (fading && !lab_eq(from[0], to[0])) {
            lab_bytes(mix(from[0], to[0], frac), p->brightness, rgb);
        } else {
            settled(p, first + col, rgb);
        }
        for (i = 0; i < p->led_count; i++) {
            put(p, out, i, rgb);
        }
        return;
    }
    if (kind == 1) {
        if (frac >= 1.0f) {
            ends[0] = to[0];
            ends[1] = to[1];
        } else {
            ends[0] = mix(from[0], to[0], frac);
            ends[1] = mix(from[1], to[1], frac);
        }
        for (i = 0; i < p->led_count; i++) {
            const uint8_t *e = entry(&p->leds, LED_ENTRY, i);
            uint16_t index = rd16(e + 4), count = rd16(e + 6);
            float f = count > 1 ? (float)index / (float)(count - 1) : 0.0f;
            uint8_t rgb[3];
            if (!fading && f == 0.0f) {
                settled(p, first + col, rgb);
            } else if (!fading && f == 1.0f) {
                settled(p, first + (col + 1) % n, rgb);
            } else {
                lab_bytes(mix(ends[0], ends[1], f), p->brightness, rgb);
            }
            put(p, out, i, rgb);
        }
        return;
    }
    /* A chase: band floor((index - speed (beat - start)) / width), round the colours. */
    {
        int64_t run = mul_q32(rdi64(t + 44), beat - rdi64(t + 36));
        int64_t width = rdi64(t + 52);
        for (i = 0; i < p->led_count; i++) {
            const uint8_t *e = entry(&p->leds, LED_ENTRY, i);
            int64_t xq = (int64_t)rd16(e + 4) * 4294967296LL - run;
            int64_t band = xq / width;
            uint32_t nb2, now, was;
            uint8_t rgb[3];
            if (band * width > xq) {
                band -= 1; /* floor for negatives */
            }
            band %= (int64_t)n;
            if (band < 0) {
                band += n;
            }
            nb2 = (uint32_t)band;
            now = (col + nb2) % n;
            was = (before + nb2) % n;
            if (fading && was != now) {
                lab_bytes(mix(colour_lab(p, first + was), colour_lab(p, first + now), frac), p->brightness, rgb);
            } else {
                settled(p, first + now, rgb);
            }
            put(p, out, i, rgb);
        }
    }
}

glowprog_status glowprog_frame(const glowprog *p, uint32_t k, uint8_t *out, size_t out_len)
{
    uint32_t track, i;
    int64_t beat;
    if (p == NULL || out == NULL) {
        return GLOWPROG_ERR_ARG;
    }
    if (k >= p->frame_count) {
        return GLOWPROG_ERR_FRAME;
    }
    if (out_len < p->frame_size) {
        return GLOWPROG_ERR_BUFFER;
    }
    track = rd32(entry(&p->play, PLAY_ENTRY, last_at_most(&p->play, PLAY_ENTRY, k)) + 4);
    if (track == DARK) {
        static const uint8_t dark[3] = {0, 0, 0};
        for (i = 0; i < p->led_count; i++) {
            put(p, out, i, dark);
        }
        return GLOWPROG_OK;
    }
    beat = glowprog_beat_of_frame(p, k);
    {
        const uint8_t *t = entry(&p->tracks, TRACK_ENTRY, track);
        if (t[8] == 3) {
            paint(p, t, k, beat, out);
        } else {
            steps(p, t, k, beat, out);
        }
    }
    return GLOWPROG_OK;
}
