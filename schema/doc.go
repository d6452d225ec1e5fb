// Package schema defines the material card format matgate.card/1: its JSON
// Schema (draft 2020-12, embedded, and kept as schema/card.schema.json for
// editors; see Schema), its Go types (Card), and the decoding of YAML and
// JSON cards (Decode) with every problem located by file, line, column and
// JSON pointer, all problems at once.
//
// # Conventions
//
// Every stress-like value of a card (stresses, moduli, c of a back-stress
// term, q and modulus of isotropic hardening, reference-curve stresses) is in
// the card's units.stress; strains are dimensionless. Uniaxially (1D) the
// back stress is the sum of the terms,
//
//	alpha = sum_i alpha_i
//	d alpha_i = C_i d eps_p - gamma_i alpha_i |d eps_p|    (linear: gamma_i = 0, C_i = H)
//
// and in 3D (von Mises) d X_i = (2/3) C_i d eps_p - gamma_i X_i dp, so that
// uniaxial 3D loading reduces to the 1D form. The yield condition is
//
//	|sigma - alpha| - (yield_stress + R(p)) <= 0
//	R(p) = K p (linear)   or   Q (1 - exp(-b p)) (Voce)
//
// with p the accumulated plastic strain. A linear term is given by its
// plastic modulus H or by the tangent modulus Et of the bilinear curve,
// H = E Et / (E - Et).
//
// # Temperature-dependent cards
//
// A card may list temperatures (strictly increasing, in units.temperature)
// and give any parameter of elastic and plasticity as one number or as a
// list with one value per temperature; Card.Tabulated holds the lists by
// JSON pointer (Tabulable says which pointers may hold one) and Card's JSON
// encoding writes them in place. Decode locates a list without
// temperatures, a list of the wrong length and temperatures that do not
// increase. Interpolation (linear, no extrapolation) belongs to convert.
//
// # What Decode accepts
//
// The syntax is detected from the content: a first character (after blanks)
// '{' or '[' means JSON, anything else YAML; a YAML flow mapping at the top
// is therefore read as JSON. A UTF-8 byte order mark is stripped and
// accepted (editors on some systems write one); UTF-16 and UTF-32 are
// refused. CRLF and CR line ends are accepted. Columns count characters.
//
// Refused, each with a located diagnostic: input over DecodeOptions.MaxBytes
// (1 MiB by default); invalid UTF-8 and control characters (binary data);
// syntax errors; more than one YAML document; YAML anchors, aliases, merge
// keys and explicit tags (a card is written out in full, which also rules
// out billion-laughs expansion); duplicate keys in YAML and JSON; .nan,
// .inf and numbers beyond float64; numbers not in plain decimal (0x, 0o,
// 0b, '_', or a leading zero, which YAML 1.1 reads as octal); nesting deeper
// than 64; text after the JSON value; and every violation of the schema,
// unknown fields included. An unquoted YAML date stays a string, so the
// schema rejects one where a number belongs.
//
// Numbers are validated as the float64 they decode to, so a card that
// Decode accepts re-encodes to one it accepts again.
//
// Rules that the schema cannot express (tangent_modulus < youngs_modulus,
// yield_stress + q > 0, the derived block and digest agreeing with the
// parameters) and plausibility belong to package convert.
//
// Verification shows that a card is integrated consistently and matches its
// references; it does not show fitness for design, which stays with the
// applicable codes and licensed engineers.
package schema
