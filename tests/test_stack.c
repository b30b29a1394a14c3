/* test_stack.c — the layer-stack reader: accepted files, every rejection (status, line,
 * message), file I/O failures, and robustness against truncated or corrupted input.
 * Run from the project root (the catalogue is loaded from "materials"). */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "epiwell.h"
#include "stack.h"

/* libconfig 1.5 leaks the text of a string token that the parser discards on a syntax
 * error (no bison %destructor), which the fuzz loop below triggers on purpose.  The leak is in
 * the system library, not in epiwell; this hook, read only by LeakSanitizer in sanitizer
 * builds, keeps that one known leak from hiding real ones. */
const char *__lsan_default_suppressions(void);
const char *__lsan_default_suppressions(void) { return "leak:strbuf_append\n"; }

typedef struct {
  ew_catalogue *cat;        /* NULL when loading failed */
  char why[1100];           /* load error, shown when catalogue cases are skipped */
} fixture;

static int group_setup(void **state) {
  static fixture fx; /* test-only: lives for the whole run */
  ew_error err;
  memset(&err, 0, sizeof err);
  if (ew_catalogue_load("materials", &fx.cat, &err) != EW_OK) {
    fx.cat = NULL;
    ew_error_text(&err, fx.why, sizeof fx.why);
  }
  *state = &fx;
  return 0;
}

static int group_teardown(void **state) {
  fixture *fx = *state;
  ew_catalogue_free(fx->cat);
  return 0;
}

/* Two user materials, on lines 1–4; layer lists in the cases start on line 5. */
#define UMATS                                                                          \
  "materials = (\n"                                                                    \
  "  { name = \"barrier\"; Ec = 1.2; Ev = -0.4; me = 0.09; mhh = 0.40; mlh = 0.10; },\n" \
  "  { name = \"wellmat\"; Ec = 0.9; Ev = -0.2; me = 0.067; mhh = 0.35; mlh = 0.09; }\n"  \
  ");\n"
/* Line 5.., a well between barriers */
#define ULAYERS                                             \
  "layers = (\n"                                            \
  "  { name = \"left\";  material = \"barrier\"; thickness = 20.0; },\n" \
  "  { name = \"well\";  material = \"wellmat\"; thickness = 8.0; },\n"  \
  "  { name = \"right\"; material = \"barrier\"; thickness = 20.0; }\n"  \
  ");\n"

typedef struct {
  const char *what;     /* what the case checks */
  const char *text;
  ew_status status;
  int line;             /* expected err.line (ignored for EW_OK) */
  const char *needle;   /* substring expected in err.message (NULL: none for EW_OK) */
} stack_case;

/* Cases that need only user-defined materials: must pass with or without a catalogue. */
static const stack_case user_cases[] = {
  {"full user-only stack is accepted", UMATS ULAYERS, EW_OK, 0, NULL},
  {"integer thickness (INT) is accepted",
   UMATS "layers = ( { material = \"wellmat\"; thickness = 8; } );\n", EW_OK, 0, NULL},
  {"64-bit integer thickness (INT64) is accepted",
   UMATS "layers = ( { material = \"wellmat\"; thickness = 8L; } );\n", EW_OK, 0, NULL},
  {"integer temperature and grid_step accepted",
   "temperature = 4;\ngrid_step = 1;\n" UMATS ULAYERS, EW_OK, 0, NULL},
  {"empty materials list is accepted (the layer then names an unknown material)",
   "materials = ();\nlayers = ( { material = \"x\"; thickness = 1; } );\n", EW_ERR_INPUT, 2,
   "unknown material 'x'"},
  {"syntax error names its line",
   "temperature = 10.0;\ngrid_step = ;\n" ULAYERS, EW_ERR_INPUT, 2, "cannot parse"},
  {"missing semicolon is a syntax error on the following line",
   "temperature = 10.0\nlayers = (;\n", EW_ERR_INPUT, 2, "cannot parse"},
  {"duplicate key inside a group is rejected by the parser",
   UMATS "layers = (\n { material = \"wellmat\"; thickness = 1.0;\n thickness = 2.0; }\n);\n",
   EW_ERR_INPUT, 7, "duplicate"},
  {"empty text", "", EW_ERR_INPUT, 1, "empty"},
  {"whitespace only", "  \n\t\n", EW_ERR_INPUT, 1, "empty"},
  {"comments only", "# nothing here\n// nor here\n", EW_ERR_INPUT, 1, "no settings"},
  {"binary garbage", "\x01\x02\xff\xfe\x7f\x80 = = ;;", EW_ERR_INPUT, 1, "cannot parse"},
  {"unknown top-level key suggests nearest",
   "temperatur = 10.0;\n" UMATS ULAYERS, EW_ERR_INPUT, 1,
   "unknown key 'temperatur' at top level; did you mean 'temperature'?"},
  {"unknown layer key suggests nearest",
   UMATS "layers = (\n { name = \"well\"; material = \"wellmat\"; thicknes = 8.0; }\n);\n",
   EW_ERR_INPUT, 6, "unknown key 'thicknes' in layer 'well'; did you mean 'thickness'?"},
  {"unknown layer key far from any lists the valid keys",
   UMATS "layers = (\n { name = \"well\"; material = \"wellmat\"; thickness = 8.0;\n"
   "   colour = \"red\"; }\n);\n", EW_ERR_INPUT, 7, "valid keys: name, material, x, y, thickness, thickness_ml, grade"},
  {"unknown material key suggests nearest",
   "materials = (\n { name = \"m\"; Ec = 1; Ev = 0; me = 0.1; mhh = 0.4; mlh = 0.1;\n"
   "   mhh_para = 0.2; }\n);\n" ULAYERS, EW_ERR_INPUT, 3,
   "unknown key 'mhh_para' in material 'm'; did you mean 'mhh_par'?"},
  {"unknown material suggests nearest user name",
   UMATS "layers = (\n { name = \"a\"; material = \"barier\"; thickness = 8.0; }\n);\n",
   EW_ERR_INPUT, 6, "unknown material 'barier' in layer 'a'; did you mean 'barrier'?"},
  {"x given for a user material",
   UMATS "layers = (\n { material = \"wellmat\";\n x = 0.2; thickness = 8.0; }\n);\n",
   EW_ERR_INPUT, 7, "'x' given for user material 'wellmat'"},
  {"missing thickness", UMATS "layers = (\n { name = \"w\"; material = \"wellmat\"; }\n);\n",
   EW_ERR_INPUT, 6, "layer 'w' has no 'thickness'"},
  {"zero thickness", UMATS "layers = (\n { material = \"wellmat\"; thickness = 0; }\n);\n",
   EW_ERR_INPUT, 6, "must be positive"},
  {"negative thickness", UMATS "layers = (\n { material = \"wellmat\"; thickness = -3.0; }\n);\n",
   EW_ERR_INPUT, 6, "must be positive"},
  {"infinite thickness (1e999 overflows to inf)",
   UMATS "layers = (\n { material = \"wellmat\"; thickness = 1e999; }\n);\n", EW_ERR_INPUT, 6,
   "finite"},
  {"thickness given as a string",
   UMATS "layers = (\n { material = \"wellmat\"; thickness = \"8\"; }\n);\n", EW_ERR_INPUT, 6,
   "must be a number, not a string"},
  {"integer literal beyond 32 bits is not silently wrapped (4294967304 would read as 8)",
   UMATS "layers = (\n { material = \"wellmat\"; thickness = 4294967304; }\n);\n",
   EW_ERR_INPUT, 6, "too large to read exactly"},
  {"same large value with an L suffix is read exactly and refused as absurd",
   UMATS "layers = (\n { material = \"wellmat\"; thickness = 4294967304L; }\n);\n",
   EW_ERR_INPUT, 6, "above the 10000 nm limit"},
  {"hex integer thickness is accepted",
   UMATS "layers = (\n { material = \"wellmat\"; thickness = 0x10; }\n);\n", EW_OK, 0, NULL},
  {"absurd single thickness",
   UMATS "layers = (\n { material = \"wellmat\"; thickness = 10001; }\n);\n", EW_ERR_INPUT, 6,
   "above the 10000 nm limit"},
  {"absurd total thickness names the layer that crosses the limit",
   UMATS "layers = (\n { material = \"wellmat\"; thickness = 9000; },\n"
   " { material = \"barrier\"; thickness = 9000; },\n"
   " { material = \"wellmat\"; thickness = 9000; }\n);\n",
   EW_ERR_INPUT, 8, "total thickness reaches 27000 nm at layer 'layer3'"},
  {"negative temperature", "temperature = -1.0;\n" UMATS ULAYERS, EW_ERR_INPUT, 1,
   "outside [0, 1500]"},
  {"absurd temperature", UMATS "temperature = 2000;\n" ULAYERS, EW_ERR_INPUT, 5,
   "outside [0, 1500]"},
  {"infinite temperature", "temperature = -1e999;\n" UMATS ULAYERS, EW_ERR_INPUT, 1, "finite"},
  {"temperature as a string", "temperature = \"300\";\n" UMATS ULAYERS, EW_ERR_INPUT, 1,
   "'temperature' must be a number, not a string"},
  {"temperature as a boolean", "temperature = true;\n" UMATS ULAYERS, EW_ERR_INPUT, 1,
   "not a boolean"},
  {"zero grid_step", "grid_step = 0.0;\n" UMATS ULAYERS, EW_ERR_INPUT, 1, "(0, 1] nm"},
  {"negative grid_step", "grid_step = -0.1;\n" UMATS ULAYERS, EW_ERR_INPUT, 1, "(0, 1] nm"},
  {"grid_step above 1 nm", "\ngrid_step = 1.5;\n" UMATS ULAYERS, EW_ERR_INPUT, 2, "(0, 1] nm"},
  {"infinite grid_step", "grid_step = 1e999;\n" UMATS ULAYERS, EW_ERR_INPUT, 1, "finite"},
  {"too many grid nodes is refused with a memory estimate",
   "grid_step = 0.001;\n" UMATS "layers = (\n { material = \"wellmat\"; thickness = 6000; }\n);\n",
   EW_ERR_INPUT, 1, "200 bytes per node per band"},
  {"too many grid nodes message gives the size in GB",
   "grid_step = 0.001;\n" UMATS "layers = (\n { material = \"wellmat\"; thickness = 6000; }\n);\n",
   EW_ERR_INPUT, 1, "3.6 GB"},
  {"zero user electron mass",
   "materials = (\n { name = \"m\"; Ec = 1; Ev = 0;\n me = 0; mhh = 0.4; mlh = 0.1; }\n);\n"
   "layers = ( { material = \"m\"; thickness = 5; } );\n", EW_ERR_INPUT, 3,
   "mass 'me' = 0 must be positive"},
  {"negative user hole mass",
   "materials = (\n { name = \"m\"; Ec = 1; Ev = 0; me = 0.1; mhh = -0.4; mlh = 0.1; }\n);\n"
   "layers = ( { material = \"m\"; thickness = 5; } );\n", EW_ERR_INPUT, 2,
   "mass 'mhh' = -0.4 must be positive"},
  {"non-positive optional in-plane mass",
   "materials = (\n { name = \"m\"; Ec = 1; Ev = 0; me = 0.1; mhh = 0.4; mlh = 0.1;\n"
   " mlh_par = 0; }\n);\nlayers = ( { material = \"m\"; thickness = 5; } );\n", EW_ERR_INPUT, 3,
   "mass 'mlh_par'"},
  {"infinite user mass",
   "materials = (\n { name = \"m\"; Ec = 1; Ev = 0; me = 1e999; mhh = 0.4; mlh = 0.1; }\n);\n"
   "layers = ( { material = \"m\"; thickness = 5; } );\n", EW_ERR_INPUT, 2, "finite"},
  {"negative eps_static",
   "materials = (\n { name = \"m\"; Ec = 1; Ev = 0; me = 0.1; mhh = 0.4; mlh = 0.1;\n"
   " eps_static = -12; }\n);\nlayers = ( { material = \"m\"; thickness = 5; } );\n",
   EW_ERR_INPUT, 3, "'eps_static' = -12 must be positive"},
  {"Ev equal to Ec",
   "materials = (\n { name = \"m\"; Ec = 1; Ev = 1; me = 0.1; mhh = 0.4; mlh = 0.1; }\n);\n"
   "layers = ( { material = \"m\"; thickness = 5; } );\n", EW_ERR_INPUT, 2, "must lie below Ec"},
  {"Ev above Ec",
   "materials = (\n { name = \"m\"; Ec = 0.5;\n Ev = 1; me = 0.1; mhh = 0.4; mlh = 0.1; }\n);\n"
   "layers = ( { material = \"m\"; thickness = 5; } );\n", EW_ERR_INPUT, 3, "must lie below Ec"},
  {"missing required user-material key",
   "materials = (\n { name = \"m\"; Ec = 1; Ev = 0; me = 0.1; mhh = 0.4; }\n);\n"
   "layers = ( { material = \"m\"; thickness = 5; } );\n", EW_ERR_INPUT, 2,
   "material 'm' lacks 'mlh'"},
  {"user material without a name",
   "materials = (\n { Ec = 1; Ev = 0; me = 0.1; mhh = 0.4; mlh = 0.1; }\n);\n" ULAYERS,
   EW_ERR_INPUT, 2, "material entry 1 has no 'name'"},
  {"user material value as a string",
   "materials = (\n { name = \"m\"; Ec = \"1\"; Ev = 0; me = 0.1; mhh = 0.4; mlh = 0.1; }\n);\n"
   "layers = ( { material = \"m\"; thickness = 5; } );\n", EW_ERR_INPUT, 2,
   "'Ec' in material 'm' must be a number"},
  {"unknown top-level key after the materials list suggests 'materials'",
   UMATS "materials2 = 1;\n" ULAYERS, EW_ERR_INPUT, 5, "did you mean 'materials'?"},
  {"duplicate user-material names name the first definition",
   "materials = (\n { name = \"m\"; Ec = 1; Ev = 0; me = 0.1; mhh = 0.4; mlh = 0.1; },\n"
   " { name = \"m\"; Ec = 2; Ev = 0; me = 0.1; mhh = 0.4; mlh = 0.1; }\n);\n"
   "layers = ( { material = \"m\"; thickness = 5; } );\n", EW_ERR_INPUT, 3,
   "defined twice (first at line 2)"},
  {"materials not a list", "materials = 3;\n" ULAYERS, EW_ERR_INPUT, 1,
   "'materials' must be a list"},
  {"materials entry not a group", "materials = (\n 3\n);\n" ULAYERS, EW_ERR_INPUT, 2,
   "entry 1 of 'materials' must be a group"},
  {"duplicate layer names",
   UMATS "layers = (\n { name = \"w\"; material = \"wellmat\"; thickness = 5; },\n"
   " { name = \"w\"; material = \"barrier\"; thickness = 5; }\n);\n", EW_ERR_INPUT, 7,
   "duplicate layer name 'w' (first used at line 6)"},
  {"explicit name colliding with a default positional name",
   UMATS "layers = (\n { name = \"layer2\"; material = \"wellmat\"; thickness = 5; },\n"
   " { material = \"barrier\"; thickness = 5; }\n);\n", EW_ERR_INPUT, 7,
   "unnamed layer gets its position"},
  {"empty layer name", UMATS "layers = (\n { name = \"\"; material = \"wellmat\"; thickness = 5; }\n);\n",
   EW_ERR_INPUT, 6, "must not be empty"},
  {"layer name too long",
   UMATS "layers = (\n { name = \"a234567890123456789012345678901234567890123456789012345678901234\";\n"
   "   material = \"wellmat\"; thickness = 5; }\n);\n", EW_ERR_INPUT, 6, "too long"},
  {"longest allowed layer name (63 chars) is accepted",
   UMATS "layers = (\n { name = \"a23456789012345678901234567890123456789012345678901234567890123\";\n"
   "   material = \"wellmat\"; thickness = 5; }\n);\n", EW_OK, 0, NULL},
  {"material name too long",
   UMATS "layers = (\n { material =\n \"m234567890123456789012345678901234567890123456789012345678901234567\";"
   " thickness = 5; }\n);\n", EW_ERR_INPUT, 6, "too long"}, /* line of the key */
  {"layer name as a number",
   UMATS "layers = (\n { name = 3; material = \"wellmat\"; thickness = 5; }\n);\n", EW_ERR_INPUT,
   6, "must be a string"},
  {"layer without material",
   UMATS "layers = (\n { name = \"w\"; thickness = 5; }\n);\n", EW_ERR_INPUT, 6,
   "layer 'w' has no 'material'"},
  {"layers missing", "temperature = 10;\n" UMATS, EW_ERR_INPUT, 1, "at least one layer"},
  {"layers not a list", UMATS "layers = 5;\n", EW_ERR_INPUT, 5, "'layers' must be a list"},
  {"layers a group", UMATS "layers = { a = 1; };\n", EW_ERR_INPUT, 5, "not a group"},
  {"layers empty list", UMATS "layers = ();\n", EW_ERR_INPUT, 5, "at least one layer"},
  {"layers empty array", UMATS "layers = [];\n", EW_ERR_INPUT, 5, "at least one layer"},
  {"layer entry not a group",
   UMATS "layers = (\n { material = \"wellmat\"; thickness = 5; },\n \"well\" );\n",
   EW_ERR_INPUT, 7, "layer 2 must be a group"}, /* libconfig dates a scalar by its lookahead */
};

/* Cases that need the catalogue (GaAs binary, AlGaAs alloy). */
static const stack_case cat_cases[] = {
  {"catalogue stack with alloy and binary is accepted",
   "layers = (\n { material = \"AlGaAs\"; x = 0.3; thickness = 20; },\n"
   " { material = \"GaAs\"; thickness = 8; }\n);\n", EW_OK, 0, NULL},
  {"alloy at x = 0 and x = 1 (ends of the range) accepted",
   "layers = (\n { material = \"AlGaAs\"; x = 0; thickness = 20; },\n"
   " { material = \"AlGaAs\"; x = 1; thickness = 8; }\n);\n", EW_OK, 0, NULL},
  {"unknown material suggests the nearest catalogue name",
   "layers = (\n { name = \"w\"; material = \"GaAss\"; thickness = 8; }\n);\n", EW_ERR_INPUT, 2,
   "unknown material 'GaAss' in layer 'w'; did you mean 'GaAs'?"},
  {"case slip in a material name suggests the catalogue spelling",
   "layers = (\n { name = \"w\"; material = \"gaas\"; thickness = 8; }\n);\n", EW_ERR_INPUT, 2,
   "did you mean 'GaAs'?"},
  {"alloy without x",
   "layers = (\n { name = \"b\"; material = \"AlGaAs\"; thickness = 8; }\n);\n", EW_ERR_INPUT, 2,
   "alloy 'AlGaAs' needs a composition 'x'"},
  {"x given for a binary",
   "layers = (\n { name = \"w\"; material = \"GaAs\";\n x = 0.1; thickness = 8; }\n);\n",
   EW_ERR_INPUT, 3, "'x' given for binary 'GaAs'"},
  {"x above 1", "layers = (\n { material = \"AlGaAs\"; thickness = 8;\n x = 1.5; }\n);\n",
   EW_ERR_INPUT, 3, "x = 1.5 is outside [0, 1]"},
  {"x below 0", "layers = (\n { material = \"AlGaAs\"; thickness = 8; x = -0.1; }\n);\n",
   EW_ERR_INPUT, 2, "outside [0, 1]"},
  {"x as a string", "layers = (\n { material = \"AlGaAs\"; thickness = 8; x = \"0.3\"; }\n);\n",
   EW_ERR_INPUT, 2, "'x' in layer 'layer1' must be a number"},
  {"user material must not shadow a catalogue name",
   "materials = (\n { name = \"GaAs\"; Ec = 1; Ev = 0; me = 0.1; mhh = 0.4; mlh = 0.1; }\n);\n"
   "layers = ( { material = \"GaAs\"; thickness = 5; } );\n", EW_ERR_INPUT, 2,
   "would shadow the catalogue material"},
  {"user and catalogue materials mix",
   UMATS "layers = (\n { material = \"AlGaAs\"; x = 0.3; thickness = 20; },\n"
   " { material = \"wellmat\"; thickness = 8; }\n);\n", EW_OK, 0, NULL},
  {"a temperature beyond the catalogue's gap model is an input error at the layer",
   "temperature = 1500.0;\nlayers = (\n { material = \"InSb\"; thickness = 5; }\n);\n",
   EW_ERR_INPUT, 3, "must be > 0"},
  /* extensions: substrate, field, grades, monolayers, quaternaries, user alloys */
  {"substrate by name accepted",
   "substrate = \"GaAs\";\nlayers = (\n { material = \"InGaAs\"; x = 0.2; thickness = 6; }\n);\n",
   EW_OK, 0, NULL},
  {"substrate alloy without x refused",
   "substrate = \"InGaAs\";\nlayers = (\n { material = \"GaAs\"; thickness = 6; }\n);\n",
   EW_ERR_INPUT, 1, "needs a composition"},
  {"substrate alloy group without x refused",
   "substrate = { material = \"InGaAs\"; };\nlayers = (\n { material = \"GaAs\"; thickness = 6; }\n);\n",
   EW_ERR_INPUT, 1, "needs its composition"},
  {"binary substrate with x refused",
   "substrate = {\n material = \"GaAs\";\n x = 0.2; };\nlayers = (\n { material = \"GaAs\"; thickness = 6; }\n);\n",
   EW_ERR_INPUT, 3, "takes no x"},
  {"an alloy written in the other element order names the catalogue's spelling and its x",
   "layers = (\n { material = \"InAlAs\"; x = 0.48; thickness = 6; }\n);\n",
   EW_ERR_INPUT, 2, "writes it 'AlInAs', x = Al fraction"},
  {"unknown substrate suggests the nearest",
   "substrate = \"GaAS\";\nlayers = (\n { material = \"GaAs\"; thickness = 6; }\n);\n",
   EW_ERR_INPUT, 1, "did you mean 'GaAs'?"},
  {"field beyond breakdown refused",
   "field = 5000.0;\nlayers = (\n { material = \"GaAs\"; thickness = 6; }\n);\n",
   EW_ERR_INPUT, 1, "kV/cm"},
  {"nonparabolic must be a boolean",
   "nonparabolic = 1;\nlayers = (\n { material = \"GaAs\"; thickness = 6; }\n);\n",
   EW_ERR_INPUT, 1, "true or false"},
  {"linewidth out of range",
   "linewidth = 0.0;\nlayers = (\n { material = \"GaAs\"; thickness = 6; }\n);\n",
   EW_ERR_INPUT, 1, "linewidth"},
  {"grade with an unknown profile",
   "layers = (\n { material = \"AlGaAs\"; thickness = 6;\n"
   "   grade = { profile = \"cubic\"; x_start = 0; x_end = 0.3; }; }\n);\n",
   EW_ERR_INPUT, 3, "unknown grade profile"},
  {"grade and x together refused",
   "layers = (\n { material = \"AlGaAs\"; x = 0.1; thickness = 6;\n"
   "   grade = { profile = \"linear\"; x_start = 0; x_end = 0.3; }; }\n);\n",
   EW_ERR_INPUT, 2, "both 'x' and a 'grade'"},
  {"grade x outside [0, 1]",
   "layers = (\n { material = \"AlGaAs\"; thickness = 6;\n"
   "   grade = { profile = \"parabolic\"; x_centre = 0; x_edge = 1.3; }; }\n);\n",
   EW_ERR_INPUT, 3, "outside [0, 1]"},
  {"grade keys of the other profile refused",
   "layers = (\n { material = \"AlGaAs\"; thickness = 6;\n"
   "   grade = { profile = \"linear\"; x_start = 0; x_end = 0.3; x_edge = 0.2; }; }\n);\n",
   EW_ERR_INPUT, 3, "does not belong"},
  {"grade on a binary refused",
   "layers = (\n { material = \"GaAs\"; thickness = 6;\n"
   "   grade = { profile = \"linear\"; x_start = 0; x_end = 0.3; }; }\n);\n",
   EW_ERR_INPUT, 3, "no composition"},
  {"thickness and thickness_ml together refused",
   "layers = (\n { material = \"GaAs\"; thickness = 6; thickness_ml = 20; }\n);\n",
   EW_ERR_INPUT, 2, "both 'thickness' and 'thickness_ml'"},
  {"thickness_ml must be positive (fractional coverages are accepted: test_input_forgiving)",
   "layers = (\n { material = \"GaAs\"; thickness_ml = -2.5; }\n);\n",
   EW_ERR_INPUT, 2, "positive number of monolayers"},
  {"thickness_ml below the minimum layer refused",
   "layers = (\n { material = \"GaAs\"; thickness_ml = 0.01; }\n);\n",
   EW_ERR_INPUT, 2, "below the 0.01 nm minimum"},
  {"quaternary without y refused",
   "layers = (\n { material = \"InGaAsP\"; x = 0.4; thickness = 6; }\n);\n",
   EW_ERR_INPUT, 2, "needs both 'x' and 'y'"},
  {"y on a ternary refused",
   "layers = (\n { material = \"AlGaAs\"; x = 0.3; y = 0.2; thickness = 6; }\n);\n",
   EW_ERR_INPUT, 2, "only for quaternaries"},
  {"user alloy of unknown end refused",
   "materials = ( { name = \"A\"; Ec = 1; Ev = 0; me = 0.07; mhh = 0.4; mlh = 0.1; } );\n"
   "alloys = ( { name = \"AB\"; first = \"A\"; second = \"B\"; } );\n"
   "layers = (\n { material = \"AB\"; x = 0.5; thickness = 6; }\n);\n",
   EW_ERR_INPUT, 2, "is not a material defined under 'materials'"},
  {"user alloy without x refused",
   "materials = ( { name = \"A\"; Ec = 1; Ev = 0; me = 0.07; mhh = 0.4; mlh = 0.1; },\n"
   "              { name = \"B\"; Ec = 0.5; Ev = 0; me = 0.07; mhh = 0.4; mlh = 0.1; } );\n"
   "alloys = ( { name = \"AB\"; first = \"A\"; second = \"B\"; bowing = { Ec = 0.1; }; } );\n"
   "layers = (\n { material = \"AB\"; thickness = 6; }\n);\n",
   EW_ERR_INPUT, 5, "needs a composition"},
};

/* Returns 1 when the case behaves as listed; prints what differed otherwise. */
static int run_case(const stack_case *c, const ew_catalogue *cat) {
  ew_stack *st = (ew_stack *)(uintptr_t)1; /* sentinel: must be overwritten */
  ew_error err;
  memset(&err, 0, sizeof err);
  ew_status got = ew_stack_read_string(c->text, "case.cfg", cat, &st, &err);
  int ok = got == c->status;
  if (ok && got != EW_OK) {
    ok = st == NULL && err.line == c->line && strcmp(err.file, "case.cfg") == 0 &&
         (!c->needle || strstr(err.message, c->needle));
  } else if (ok) {
    ok = st != NULL;
  }
  if (!ok)
    print_error("case \"%s\": got status %d line %d message \"%s\" (out %s); want status %d "
                "line %d containing \"%s\"\n", c->what, (int)got, err.line,
                got ? err.message : "", st ? "set" : "NULL", (int)c->status, c->line,
                c->needle ? c->needle : "");
  if (got == EW_OK) ew_stack_free(st);
  return ok;
}

/* Each row of user_cases gets the status, line and message it expects (no catalogue needed;
 * run with the catalogue too when there is one, which must not change the outcome). */
static void test_user_cases(void **state) {
  fixture *fx = *state;
  int bad = 0;
  for (size_t i = 0; i < sizeof user_cases / sizeof user_cases[0]; i++) {
    bad += !run_case(&user_cases[i], NULL);
    if (fx->cat) bad += !run_case(&user_cases[i], fx->cat);
  }
  assert_int_equal(bad, 0);
}

/* Each row of cat_cases, which need catalogue materials; skipped when loading failed. */
static void test_catalogue_cases(void **state) {
  fixture *fx = *state;
  if (!fx->cat) {
    print_message("skipping %zu catalogue cases: cannot load catalogue: %s\n",
                  sizeof cat_cases / sizeof cat_cases[0], fx->why);
    skip();
  }
  int bad = 0;
  for (size_t i = 0; i < sizeof cat_cases / sizeof cat_cases[0]; i++)
    bad += !run_case(&cat_cases[i], fx->cat);
  assert_int_equal(bad, 0);
}

/* A good user-only stack: thicknesses, z positions, lines, defaults, user band values. */
static void test_good_user_stack(void **state) {
  (void)state;
  const char *text =
      "temperature = 10.0;\n"
      "grid_step = 0.05;\n"
      "materials = (\n"
      "  { name = \"deep\"; Ec = 1.2; Ev = -0.4; me = 0.09; mhh = 0.40; mlh = 0.10;\n"
      "    mhh_par = 0.11; eps_static = 12.5; },\n"
      "  { name = \"wm\"; Ec = 0.9; Ev = -0.2; me = 0.067; mhh = 0.35; mlh = 0.09; }\n"
      ");\n"
      "layers = (\n"
      "  { name = \"left\"; material = \"deep\"; thickness = 30.0; },\n"
      "  { material = \"wm\"; thickness = 8; },\n"
      "  { name = \"right\"; material = \"deep\"; thickness = 25.5; }\n"
      ");\n";
  ew_stack *st = NULL;
  ew_error err;
  assert_int_equal(ew_stack_read_string(text, "good.cfg", NULL, &st, &err), EW_OK);
  assert_non_null(st);
  assert_string_equal(st->path, "good.cfg");
  assert_true(st->temperature_K == 10.0);
  assert_true(st->grid_step_nm == 0.05);
  assert_int_equal(st->n_layers, 3);
  assert_true(fabs(st->total_nm - 63.5) < 1e-12);

  const ew_layer *L = st->layers;
  assert_string_equal(L[0].name, "left");
  assert_string_equal(L[1].name, "layer2"); /* default name from position */
  assert_string_equal(L[2].name, "right");
  assert_true(L[0].z_start_nm == 0.0 && L[1].z_start_nm == 30.0 && L[2].z_start_nm == 38.0);
  assert_true(L[0].thickness_nm == 30.0 && L[1].thickness_nm == 8.0 && L[2].thickness_nm == 25.5);
  assert_int_equal(L[0].line, 9);
  assert_int_equal(L[1].line, 10);
  assert_int_equal(L[2].line, 11);
  for (int i = 0; i < 3; i++) {
    assert_int_equal(L[i].user_material, 1);
    assert_int_equal(L[i].has_x, 0);
  }
  assert_string_equal(L[1].material, "wm");

  const ew_bands *b = &L[0].bands; /* "deep": explicit in-plane hh mass and permittivity */
  assert_true(b->Ec_eV == 1.2 && b->Ev_eV == -0.4);
  assert_true(b->Ev_hh_eV == -0.4 && b->Ev_lh_eV == -0.4);
  assert_true(fabs(b->Eg_G_eV - 1.6) < 1e-12);
  assert_true(b->Eg_X_eV >= 1e9 && b->Eg_L_eV >= 1e9);
  assert_true(b->me == 0.09 && b->mhh_z == 0.40 && b->mlh_z == 0.10);
  assert_true(b->mhh_par == 0.11);
  assert_true(b->mlh_par == 0.10); /* defaulted to mlh */
  assert_true(b->eps_r == 12.5 && b->a_nm == 0.0 && b->lowest_valley == 0);
  b = &L[1].bands; /* "wm": defaults */
  assert_true(b->mhh_par == 0.35 && b->mlh_par == 0.09 && b->eps_r == 0.0);
  ew_stack_free(st);
}

/* Defaults: no temperature means 300 K, no grid_step means 0 ("solver decides"). */
static void test_defaults(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_error err;
  assert_int_equal(ew_stack_read_string(UMATS ULAYERS, "d.cfg", NULL, &st, &err), EW_OK);
  assert_true(st->temperature_K == 300.0);
  assert_true(st->grid_step_nm == 0.0);
  assert_int_equal(st->layers[0].line, 6);
  ew_stack_free(st);
}

/* Catalogue layers: bands come from the catalogue at the stack temperature, x is recorded. */
static void test_good_catalogue_stack(void **state) {
  fixture *fx = *state;
  if (!fx->cat) {
    print_message("skipping: cannot load catalogue: %s\n", fx->why);
    skip();
  }
  const char *text = "temperature = 77;\nlayers = (\n"
                     " { material = \"AlGaAs\"; x = 0.3; thickness = 20; },\n"
                     " { material = \"GaAs\"; thickness = 8; }\n);\n";
  ew_stack *st = NULL;
  ew_error err;
  assert_int_equal(ew_stack_read_string(text, "c.cfg", fx->cat, &st, &err), EW_OK);
  assert_int_equal(st->layers[0].has_x, 1);
  assert_true(st->layers[0].x == 0.3);
  assert_int_equal(st->layers[0].user_material, 0);
  assert_int_equal(st->layers[1].has_x, 0);
  ew_bands want;
  assert_int_equal(ew_material_bands(fx->cat, "AlGaAs", 0.3, 77.0, &want, &err), EW_OK);
  assert_true(st->layers[0].bands.Ec_eV == want.Ec_eV);
  assert_true(st->layers[0].bands.me == want.me);
  assert_true(st->layers[1].bands.Ec_eV < st->layers[0].bands.Ec_eV); /* GaAs is the well */
  ew_stack_free(st);
}

/* File reading: a good file parses and keeps its path; missing path or a directory is
 * EW_ERR_IO naming the path; NULL free is a no-op. */
static void test_read_file(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_error err;
  memset(&err, 0, sizeof err);
  assert_int_equal(ew_stack_read_file("tests/data/stack_user.cfg", NULL, &st, &err), EW_OK);
  assert_string_equal(st->path, "tests/data/stack_user.cfg");
  assert_int_equal(st->n_layers, 3);
  assert_true(st->total_nm == 66.0);
  ew_stack_free(st);

  st = (ew_stack *)(uintptr_t)1;
  assert_int_equal(ew_stack_read_file("tests/data/no_such_file.cfg", NULL, &st, &err),
                   EW_ERR_IO);
  assert_null(st);
  assert_non_null(strstr(err.message, "tests/data/no_such_file.cfg"));
  assert_string_equal(err.file, "tests/data/no_such_file.cfg");

  st = (ew_stack *)(uintptr_t)1;
  assert_int_equal(ew_stack_read_file("tests/data", NULL, &st, &err), EW_ERR_IO);
  assert_null(st);

  ew_stack_free(NULL);
}

/* Garbage bytes in a file (including NUL) give an error with a line, never a crash. */
static void test_garbage_file(void **state) {
  (void)state;
  char path[] = "/tmp/ew_test_stack_XXXXXX";
  int fd = mkstemp(path);
  assert_true(fd >= 0);
  unsigned char bytes[2048];
  uint32_t s = 12345u;
  for (size_t i = 0; i < sizeof bytes; i++) {
    s = s * 1664525u + 1013904223u;
    bytes[i] = (unsigned char)(s >> 24);
  }
  assert_int_equal(write(fd, bytes, sizeof bytes), (ssize_t)sizeof bytes);
  close(fd);
  ew_stack *st = (ew_stack *)(uintptr_t)1;
  ew_error err;
  memset(&err, 0, sizeof err);
  assert_int_equal(ew_stack_read_file(path, NULL, &st, &err), EW_ERR_INPUT);
  assert_null(st);
  assert_true(err.line >= 1 && err.message[0]);

  /* a text file with a NUL after valid settings: reported as binary, not silently cut */
  FILE *f = fopen(path, "wb");
  assert_non_null(f);
  fputs("temperature = 10;\n", f);
  fputc('\0', f);
  fputs("layers = ();\n", f);
  fclose(f);
  st = (ew_stack *)(uintptr_t)1;
  assert_int_equal(ew_stack_read_file(path, NULL, &st, &err), EW_ERR_INPUT);
  assert_null(st);
  assert_int_equal(err.line, 2);
  assert_non_null(strstr(err.message, "binary"));
  unlink(path);
}

/* One fuzz input: must not crash; a failure leaves *out NULL, line >= 0, a message. */
static void fuzz_one(const char *text, const ew_catalogue *cat, size_t *n_ok, size_t *n_err) {
  ew_stack *st = (ew_stack *)(uintptr_t)1;
  ew_error err;
  memset(&err, 0, sizeof err);
  ew_status rc = ew_stack_read_string(text, "fuzz.cfg", cat, &st, &err);
  if (rc == EW_OK) {
    assert_non_null(st);
    assert_true(st->n_layers >= 1);
    ew_stack_free(st);
    ++*n_ok;
  } else {
    assert_null(st);
    assert_true(err.line >= 0);
    assert_true(err.message[0] != '\0');
    ++*n_err;
  }
}

/* Truncate a valid stack at every byte and corrupt bytes deterministically (fixed seed). */
static void fuzz_text(const char *valid, const ew_catalogue *cat) {
  size_t n = strlen(valid), n_ok = 0, n_err = 0;
  char *buf = malloc(n + 1);
  assert_non_null(buf);
  for (size_t cut = 0; cut <= n; cut++) {
    memcpy(buf, valid, cut);
    buf[cut] = '\0';
    fuzz_one(buf, cat, &n_ok, &n_err);
  }
  uint64_t s = 0x9e3779b97f4a7c15u; /* xorshift64, fixed seed: reproducible failures */
  for (int round = 0; round < 3000; round++) {
    memcpy(buf, valid, n + 1);
    int flips = 1 + round % 4;
    for (int k = 0; k < flips; k++) {
      s ^= s << 13, s ^= s >> 7, s ^= s << 17;
      size_t pos = (size_t)(s % n);
      buf[pos] = (char)(buf[pos] ^ (char)(1u << ((s >> 32) % 8)));
    }
    fuzz_one(buf, cat, &n_ok, &n_err);
  }
  print_message("fuzz: %zu accepted, %zu rejected\n", n_ok, n_err);
  assert_true(n_err > 0); /* the corruption must actually exercise the error paths */
  free(buf);
}

static void test_fuzz(void **state) {
  fixture *fx = *state;
  fuzz_text("temperature = 10.0;\ngrid_step = 0.05;\n" UMATS ULAYERS, NULL);
  if (fx->cat)
    fuzz_text("temperature = 10.0;\n" UMATS
              "layers = (\n { name = \"l\"; material = \"AlGaAs\"; x = 0.3; thickness = 20; },\n"
              " { name = \"w\"; material = \"GaAs\"; thickness = 8; },\n"
              " { name = \"r\"; material = \"barrier\"; thickness = 20; }\n);\n",
              fx->cat);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_user_cases),      cmocka_unit_test(test_catalogue_cases),
      cmocka_unit_test(test_good_user_stack), cmocka_unit_test(test_defaults),
      cmocka_unit_test(test_good_catalogue_stack), cmocka_unit_test(test_read_file),
      cmocka_unit_test(test_garbage_file),    cmocka_unit_test(test_fuzz),
  };
  return cmocka_run_group_tests_name("stack", tests, group_setup, group_teardown);
}
