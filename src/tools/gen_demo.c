/*
 * gen_demo.c - writes the demo campaign from stated true parameters.
 *
 * The campaign is invented: a screening batch of nickel catalysts on a series
 * of zeolite supports, tested for a hydrogenation in a small fixed-bed rig.
 * Each sample has a true apparent activation energy and a true rate at a
 * reference temperature; the generator adds lognormal scatter from a seeded
 * GSL random number generator and writes each file in the units and CSV
 * dialect of a different (invented) rig, so the demo exercises the reader.
 *
 *   gen_demo DIR        write DIR/campaign.ini and DIR/<sample>.csv
 *   gen_demo --truth    print the true parameters: id, Ea [kJ/mol],
 *                       ln A [ln(umol/(g*s))], clean (1/0), flaw
 *   gen_demo --batch2 DIR   write the second, later batch (below)
 *   gen_demo --truth2   the second batch's true parameters, as measured on
 *                       the drifted rig (the drift included), same columns
 *
 * The leaders at the operating temperature, 270 degC, truly differ by a few
 * per cent: ZN-09 beta-desilicated is 3.8 % faster than ZN-07 H-Y and 10 %
 * faster than ZN-03 USY.  ZN-09, the noisiest of the three (6 % scatter),
 * was heated only to 270 degC, so its rate there rests on the hot end of its
 * line; the screen cannot tell the three apart at 95 % (a three-way tie),
 * and `arrank plan` shows which runs settle it (README, "Planning the next
 * runs").  Changing a rate or a range draws the same random numbers: every
 * other sample's data stay as they are.
 *
 * The second batch (invented): the same rig months later, whose rates now
 * read BATCH2_DRIFT times the truth (a flow meter out of calibration), with
 * the reference catalyst ZN-01 H-beta tested again, ZN-03 USY tested again
 * after regeneration (unchanged), ZN-09 beta-desilicated after ageing
 * (activity BATCH2_AGED of the fresh one, Ea unchanged) and two new samples.
 * Its campaign.ini names the reference.
 *
 * Three samples carry a flaw by design, for the diagnostics (flaw column):
 *  - transport: pore diffusion in spherical pellets, rate = eta k with the
 *    exact first-order sphere effectiveness factor eta = (3/phi^2)(phi coth
 *    phi - 1) (Thiele 1939; Weisz & Prater 1954); the pellet data that give
 *    phi are written as metadata, so the Weisz-Prater number can be checked;
 *  - deactivation: a heating ramp then a cooling ramp while the catalyst
 *    loses 20 % of its activity, progressively, by the last point;
 *  - high_conversion: an integral first-order plug-flow reactor, X = 1 -
 *    exp(-Da), reported as the differential rate F X / W, with conversions
 *    rising above 10 % at the hot end.
 * Their Ea and ln A are those of the intrinsic (fresh, differential) kinetics.
 */
#include <gsl/gsl_errno.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "arrank/fit.h"

#define SEED 20261201UL
#define T_RATE_REF_K 553.15 /* the true rates below are given at 280 degC */

typedef enum { UNIT_DEGC, UNIT_K, UNIT_DEGF } temp_unit;

typedef enum { FLAW_NONE = 0, FLAW_TRANSPORT, FLAW_DEACTIVATION, FLAW_CONVERSION } flaw_kind;
static const char *const flaw_names[] = {"none", "transport", "deactivation", "high_conversion"};

/* Flawed samples: pellet radius, pellet density and feed concentration of the
   transport case, the temperature where its Thiele modulus is 1, the total
   activity loss of the deactivating case and the hottest point's Damkoehler
   number (-ln(1 - X)) of the over-converted case.  All invented. */
#define PELLET_RADIUS_M 1.5e-3
#define PELLET_DENSITY_KG_M3 1100.0
#define FEED_CONC_MOL_M3 12.0
#define PHI_ONE_AT_K 550.0
#define ACTIVITY_LOSS 0.20
#define DA_HOT 0.22

typedef struct {
    const char *id;
    double ea_kJ_mol;       /* true apparent activation energy */
    double rate_ref;        /* true rate at T_RATE_REF_K, umol/(g*s) */
    double t_lo_C, t_hi_C;  /* measured range, degC */
    int n_temps;
    double scatter;         /* lognormal sigma of ln r */
    temp_unit tunit;
    const char *rate_unit;  /* header spelling */
    double rate_factor;     /* value in rate_unit per umol/(g*s) */
    char delim;
    int decimal_comma, crlf, bom, with_sd, with_runs;
    const char *note;
    int clean;              /* 1: the fit should recover the truth */
    flaw_kind flaw;         /* a flaw by design for the diagnostics */
} sample_spec;

static const sample_spec samples[] = {
    {"ZN-01 H-beta", 62.0, 3.10, 230, 310, 9, 0.04, UNIT_DEGC, "umol/(g*s)", 1.0, ',', 0, 0, 0, 0, 0,
     "reduced 2 h at 450 C", 1, FLAW_NONE},
    {"ZN-02 H-ZSM-5", 88.0, 1.45, 240, 320, 8, 0.04, UNIT_K, "mol/(kg*h)", 3.6, ',', 0, 0, 0, 0, 0,
     "rig B export", 1, FLAW_NONE},
    {"ZN-03 USY", 47.0, 4.95, 220, 300, 9, 0.05, UNIT_DEGC, "umol/(g*s)", 1.0, ';', 1, 1, 1, 0, 0,
     "exported with decimal commas", 1, FLAW_NONE},
    {"ZN-04 mordenite", 121.0, 0.62, 250, 330, 10, 0.04, UNIT_DEGC, "mmol/(g*h)", 3.6, '\t', 0, 0,
     0, 1, 0, "rate_sd from triplicate GC injections", 1, FLAW_NONE},
    {"ZN-05 ferrierite", 143.0, 0.21, 260, 340, 9, 0.05, UNIT_K, "umol/(g*min)", 60.0, ',', 0, 0, 0,
     0, 1, "heating and cooling ramps", 1, FLAW_NONE},
    {"ZN-06 SAPO-34", 74.0, 2.20, 230, 310, 8, 0.03, UNIT_DEGF, "umol/(g*s)", 1.0, ',', 0, 1, 0, 0,
     0, "thermocouple logged in degF", 1, FLAW_NONE},
    {"ZN-07 H-Y", 55.0, 5.42, 220, 300, 10, 0.04, UNIT_DEGC, "mol/(kg*s)", 1e-3, ',', 0, 0, 0, 1, 0,
     NULL, 1, FLAW_NONE},
    {"ZN-08 silicalite", 102.0, 0.95, 240, 320, 9, 0.04, UNIT_DEGC, "umol/(g*s)", 1.0, ',', 0, 0, 0,
     0, 0, "low acidity reference", 1, FLAW_NONE},
    {"ZN-09 beta-desilicated", 67.0, 5.90, 220, 270, 8, 0.06, UNIT_K, "mol/(kg*h)", 3.6, ';', 1, 0,
     0, 0, 0, NULL, 1, FLAW_NONE},
    {"ZN-10 MCM-22", 95.0, 1.10, 245, 325, 9, 0.04, UNIT_DEGC, "umol/(g*s)", 1.0, ',', 0, 0, 0, 0, 0,
     NULL, 1, FLAW_NONE},
    {"ZN-11 ITQ-2", 80.0, 1.70, 250, 260, 2, 0.04, UNIT_DEGC, "umol/(g*s)", 1.0, ',', 0, 0, 0, 0, 0,
     "run aborted after two temperatures (mass-flow controller fault)", 0, FLAW_NONE},
    {"ZN-12 beta extrudate", 125.0, 2.00, 210, 340, 14, 0.03, UNIT_DEGC, "umol/(g*s)", 1.0, ',', 0,
     0, 0, 0, 0, "3 mm extrudates tested whole", 0, FLAW_TRANSPORT},
    {"ZN-13 Ni-rich Y", 72.0, 3.00, 230, 300, 8, 0.03, UNIT_DEGC, "umol/(g*s)", 1.0, ',', 0, 0, 0,
     0, 1, "heating then cooling ramp; sintering suspected", 0, FLAW_DEACTIVATION},
    {"ZN-14 high-load ZSM-5", 84.0, 2.50, 230, 310, 9, 0.03, UNIT_DEGC, "umol/(g*s)", 1.0, ',', 0,
     0, 0, 0, 0, "30 wt% Ni, same bed size as the others", 0, FLAW_CONVERSION},
};

/* The second batch: the rig's reading against the truth, the aged sample's
   activity against its fresh one, the seed.  All invented. */
#define BATCH2_DRIFT 0.82
#define BATCH2_AGED 0.70
#define BATCH2_SEED 20261202UL

static const sample_spec batch2[] = {
    {"ZN-01 H-beta", 62.0, 3.10 * BATCH2_DRIFT, 230, 310, 9, 0.04, UNIT_DEGC, "umol/(g*s)", 1.0,
     ',', 0, 0, 0, 0, 0, "reference, tested again", 1, FLAW_NONE},
    {"ZN-03 USY", 47.0, 4.95 * BATCH2_DRIFT, 220, 300, 9, 0.05, UNIT_DEGC, "umol/(g*s)", 1.0, ',',
     0, 0, 0, 0, 0, "regenerated in air at 500 C, tested again", 1, FLAW_NONE},
    {"ZN-09 beta-desilicated", 67.0, 5.90 * BATCH2_DRIFT * BATCH2_AGED, 220, 290, 8, 0.06, UNIT_K,
     "mol/(kg*h)", 3.6, ',', 0, 0, 0, 0, 0, "after 200 h on stream", 1, FLAW_NONE},
    {"ZN-15 Ni-USY steamed", 52.0, 4.80 * BATCH2_DRIFT, 220, 300, 8, 0.04, UNIT_DEGC,
     "umol/(g*s)", 1.0, ',', 0, 0, 0, 0, 0, NULL, 1, FLAW_NONE},
    {"ZN-16 Ni-beta nanocrystals", 64.0, 4.10 * BATCH2_DRIFT, 225, 305, 8, 0.04, UNIT_DEGC,
     "umol/(g*s)", 1.0, ',', 0, 0, 0, 0, 0, NULL, 1, FLAW_NONE},
};

static double ln_rate_true(const sample_spec *s, double T_K)
{
    return log(s->rate_ref) - s->ea_kJ_mol * 1e3 / ARRANK_R_J_MOL_K * (1.0 / T_K - 1.0 / T_RATE_REF_K);
}

/* ln A in umol/(g*s): ln r(T) + Ea/(R T) at any T. */
static double ln_A_true(const sample_spec *s)
{
    return log(s->rate_ref) + s->ea_kJ_mol * 1e3 / (ARRANK_R_J_MOL_K * T_RATE_REF_K);
}

static void put_number(FILE *f, double v, int digits, int decimal_comma)
{
    char buf[64];
    snprintf(buf, sizeof buf, "%.*g", digits, v);
    if (decimal_comma)
        for (char *p = buf; *p; p++)
            if (*p == '.')
                *p = ',';
    fputs(buf, f);
}

static int write_sample(const char *dir, const sample_spec *s, gsl_rng *rng)
{
    char file_id[64];
    snprintf(file_id, sizeof file_id, "%.5s", s->id); /* "ZN-01" */
    char path[1024];
    snprintf(path, sizeof path, "%s/%s.csv", dir, file_id);
    FILE *f = fopen(path, "wb");
    if (!f) {
        perror(path);
        return 1;
    }
    const char *eol = s->crlf ? "\r\n" : "\n";
    if (s->bom)
        fputs("\xEF\xBB\xBF", f);
    fprintf(f, "# sample = %s%s", s->id, eol);
    fprintf(f, "# basis = mass%s# mass = %d mg%s", eol, 40 + (int)(strlen(s->id) * 3) % 30, eol);
    if (s->note)
        fprintf(f, "# note = %s%s", s->note, eol);
    if (s->flaw == FLAW_TRANSPORT) {
        /* D_e from phi = 1 at PHI_ONE_AT_K: phi^2 = R_p^2 k_v / D_e with the
           first-order k_v = r rho_p / C (r in mol/(kg s)) */
        double k_v = exp(ln_rate_true(s, PHI_ONE_AT_K)) * 1e-3 * PELLET_DENSITY_KG_M3 /
                     FEED_CONC_MOL_M3;
        fprintf(f, "# particle_diameter = %g mm%s", 2e3 * PELLET_RADIUS_M, eol);
        fprintf(f, "# pellet_density = %g g/cm3%s", PELLET_DENSITY_KG_M3 / 1000.0, eol);
        fprintf(f, "# effective_diffusivity = %.3g m2/s%s",
                PELLET_RADIUS_M * PELLET_RADIUS_M * k_v, eol);
        fprintf(f, "# bulk_concentration = %g mol/m3%s", FEED_CONC_MOL_M3, eol);
        fprintf(f, "# reaction_order = 1%s", eol);
    }
    const char *tname = s->tunit == UNIT_K ? "K" : s->tunit == UNIT_DEGF ? "degF" : "degC";
    fprintf(f, "T [%s]%crate [%s]", tname, s->delim, s->rate_unit);
    if (s->with_sd)
        fprintf(f, "%crate_sd [%s]", s->delim, s->rate_unit);
    if (s->with_runs)
        fprintf(f, "%crun", s->delim);
    if (s->flaw == FLAW_CONVERSION)
        fprintf(f, "%cconversion [%%]", s->delim);
    fputs(eol, f);
    /* over-converted case: F_A0/W so that Da = r_true W/F_A0 is DA_HOT at the
       hottest set point */
    double feed_per_mass = exp(ln_rate_true(s, s->t_hi_C + 273.15)) / DA_HOT;
    int n_written = 0, n_total = s->n_temps * (s->with_runs ? 2 : 1);

    int passes = s->with_runs ? 2 : 1;
    for (int pass = 0; pass < passes; pass++) {
        for (int k = 0; k < s->n_temps; k++) {
            int j = pass == 0 ? k : s->n_temps - 1 - k; /* second pass: cooling ramp */
            double tC = s->t_lo_C + (s->t_hi_C - s->t_lo_C) * j / (s->n_temps - 1);
            tC += gsl_ran_gaussian(rng, 0.3); /* set point is never hit exactly */
            double T_K = tC + 273.15;
            double r = exp(ln_rate_true(s, T_K) + gsl_ran_gaussian(rng, s->scatter));
            double conversion = NAN;
            if (s->flaw == FLAW_TRANSPORT) {
                /* phi grows as sqrt(k/D_e), D_e ~ T^0.5 (Knudsen-like) */
                double phi = sqrt(exp(ln_rate_true(s, T_K) - ln_rate_true(s, PHI_ONE_AT_K)) /
                                  sqrt(T_K / PHI_ONE_AT_K));
                r *= 3.0 / (phi * phi) * (phi / tanh(phi) - 1.0);
            } else if (s->flaw == FLAW_DEACTIVATION) {
                r *= pow(1.0 - ACTIVITY_LOSS, (double)n_written / (double)(n_total - 1));
            } else if (s->flaw == FLAW_CONVERSION) {
                conversion = -expm1(-r / feed_per_mass); /* X = 1 - exp(-Da) */
                r = feed_per_mass * conversion;         /* reported as F X / W */
            }
            n_written++;
            double shown_T = s->tunit == UNIT_K ? T_K : s->tunit == UNIT_DEGF ? tC * 9.0 / 5.0 + 32.0 : tC;
            put_number(f, round(shown_T * 10.0) / 10.0, 6, s->decimal_comma);
            fputc(s->delim, f);
            put_number(f, r * s->rate_factor, 4, s->decimal_comma);
            if (s->with_sd) {
                fputc(s->delim, f);
                put_number(f, r * s->rate_factor * s->scatter, 2, s->decimal_comma);
            }
            if (s->with_runs)
                fprintf(f, "%c%s", s->delim, pass == 0 ? "heat" : "cool");
            if (s->flaw == FLAW_CONVERSION) {
                fputc(s->delim, f);
                put_number(f, 100.0 * conversion, 3, s->decimal_comma);
            }
            fputs(eol, f);
        }
    }
    if (fclose(f) != 0) {
        perror(path);
        return 1;
    }
    return 0;
}

/* The second batch into dir (the heading comment). */
static int write_batch2(const char *dir)
{
    mkdir(dir, 0777);
    char path[1024];
    snprintf(path, sizeof path, "%s/campaign.ini", dir);
    FILE *f = fopen(path, "w");
    if (!f) {
        perror(path);
        return 1;
    }
    fprintf(f, "; Invented second batch of the demo: the same rig months later.\n"
               "; Written by src/tools/gen_demo.c --batch2 from stated true parameters.\n"
               "[campaign]\n"
               "title = Ni on zeolites, second batch (demo)\n"
               "operating_temperature = 270 degC\n"
               "rate_unit = umol/(g*s)\n"
               "confidence = 0.95\n"
               "reference = ZN-01 H-beta\n");
    fclose(f);
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, BATCH2_SEED);
    int bad = 0;
    for (size_t i = 0; i < sizeof batch2 / sizeof *batch2; i++)
        bad |= write_sample(dir, &batch2[i], rng);
    gsl_rng_free(rng);
    return bad;
}

int main(int argc, char **argv)
{
    gsl_set_error_handler_off();
    size_t n = sizeof samples / sizeof *samples;
    if (argc == 2 && strcmp(argv[1], "--truth") == 0) {
        printf("# id\tEa [kJ/mol]\tln A [ln(umol/(g*s))]\tclean\tflaw\n");
        for (size_t i = 0; i < n; i++)
            printf("%s\t%.6f\t%.9f\t%d\t%s\n", samples[i].id, samples[i].ea_kJ_mol,
                   ln_A_true(&samples[i]), samples[i].clean, flaw_names[samples[i].flaw]);
        return 0;
    }
    if (argc == 2 && strcmp(argv[1], "--truth2") == 0) {
        printf("# id\tEa [kJ/mol]\tln A [ln(umol/(g*s))]\tclean\tflaw\n");
        for (size_t i = 0; i < sizeof batch2 / sizeof *batch2; i++)
            printf("%s\t%.6f\t%.9f\t%d\t%s\n", batch2[i].id, batch2[i].ea_kJ_mol,
                   ln_A_true(&batch2[i]), batch2[i].clean, flaw_names[batch2[i].flaw]);
        return 0;
    }
    if (argc == 3 && strcmp(argv[1], "--batch2") == 0)
        return write_batch2(argv[2]);
    if (argc != 2 || argv[1][0] == '-') {
        fprintf(stderr, "usage: gen_demo DIR | gen_demo --batch2 DIR | gen_demo --truth | "
                        "gen_demo --truth2\n");
        return 2;
    }
    const char *dir = argv[1];
    mkdir(dir, 0777);
    char path[1024];
    snprintf(path, sizeof path, "%s/campaign.ini", dir);
    FILE *f = fopen(path, "w");
    if (!f) {
        perror(path);
        return 1;
    }
    fprintf(f, "; Invented demo campaign: Ni on zeolite supports, screening for a hydrogenation.\n"
               "; Written by src/tools/gen_demo.c from stated true parameters (gen_demo --truth).\n"
               "[campaign]\n"
               "title = Ni on zeolites, hydrogenation screen (demo)\n"
               "operating_temperature = 270 degC\n"
               "rate_unit = umol/(g*s)\n"
               "confidence = 0.95\n");
    fclose(f);
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, SEED);
    int bad = 0;
    for (size_t i = 0; i < n; i++)
        bad |= write_sample(dir, &samples[i], rng);
    gsl_rng_free(rng);
    return bad;
}
