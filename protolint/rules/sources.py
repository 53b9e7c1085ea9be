"""The publications and standards the rules cite, written out once so that every rule cites them
the same way. Each entry was checked against the publisher's, PubMed's or the standard's own record, or a
reference list that reproduces it: authors, year, title, journal, volume(issue):pages and a DOI
or PubMed id. Where a field is missing, it could not be confirmed and is left out rather than
guessed. A rule adds the section or the point it relies on after the entry; a rule whose basis is
the practice of the trade, with no single citable source, says "common practice".
"""

from __future__ import annotations

BLAND_ALTMAN_1986 = ("Bland JM, Altman DG (1986). Statistical methods for assessing agreement between two methods of "
                     "clinical measurement. Lancet 327(8476):307-310. doi:10.1016/S0140-6736(86)90837-8")
BONETT_2002 = ("Bonett DG (2002). Sample size requirements for estimating intraclass correlations with desired "
               "precision. Statistics in Medicine 21(9):1331-1335. doi:10.1002/sim.1108")
COSMIN_RISK_OF_BIAS_2020 = ("Mokkink LB, Boers M, van der Vleuten CPM, Bouter LM, Alonso J, Patrick DL, de Vet HCW, "
                            "Terwee CB (2020). COSMIN Risk of Bias tool to assess the quality of studies on reliability "
                            "or measurement error of outcome measurement instruments: a Delphi study. BMC Medical "
                            "Research Methodology 20:293. doi:10.1186/s12874-020-01179-5")
COSMIN_CHECKLIST_2010 = ("Mokkink LB, Terwee CB, Patrick DL, Alonso J, Stratford PW, Knol DL, Bouter LM, de Vet HCW "
                         "(2010). The COSMIN checklist for assessing the methodological quality of studies on "
                         "measurement properties of health status measurement instruments: an international Delphi "
                         "study. Quality of Life Research 19(4):539-549. doi:10.1007/s11136-010-9606-8")
COSMIN_GUIDELINE_2018 = ("Prinsen CAC, Mokkink LB, Bouter LM, Alonso J, Patrick DL, de Vet HCW, Terwee CB (2018). "
                         "COSMIN guideline for systematic reviews of patient-reported outcome measures. Quality of Life "
                         "Research 27(5):1147-1157. doi:10.1007/s11136-018-1798-3")
DE_VET_2006 = ("de Vet HCW, Terwee CB, Ostelo RWJG, Beckerman H, Knol DL, Bouter LM (2006). Minimal changes in health "
               "status questionnaires: distinction between minimally detectable change and minimally important change. "
               "Health and Quality of Life Outcomes 4:54. doi:10.1186/1477-7525-4-54")
FDA_PRO_2009 = ("US Food and Drug Administration (2009). Guidance for Industry. Patient-Reported Outcome Measures: Use in "
                "Medical Product Development to Support Labeling Claims. Announced in the "
                "Federal Register 74(235):65132-65133")
GRRAS_2011 = ("Kottner J, Audigé L, Brorson S, Donner A, Gajewski BJ, Hróbjartsson A, Roberts C, Shoukri M, Streiner DL "
              "(2011). Guidelines for Reporting Reliability and Agreement Studies (GRRAS) were proposed. Journal of "
              "Clinical Epidemiology 64(1):96-106. doi:10.1016/j.jclinepi.2010.03.002")
HROBJARTSSON_2012 = ("Hróbjartsson A, Thomsen ASS, Emanuelsson F, Tendal B, Hilden J, Boutron I, Ravaud P, Brorson S "
                     "(2012). Observer bias in randomised clinical trials with binary outcomes: systematic review of "
                     "trials with both blinded and non-blinded outcome assessors. BMJ 344:e1119. doi:10.1136/bmj.e1119")
HROBJARTSSON_2013 = ("Hróbjartsson A, Thomsen ASS, Emanuelsson F, Tendal B, Hilden J, Boutron I, Ravaud P, Brorson S "
                     "(2013). Observer bias in randomized clinical trials with measurement scale outcomes: a systematic "
                     "review of trials with both blinded and nonblinded assessors. CMAJ 185(4):E201-E211. "
                     "doi:10.1503/cmaj.120744")
ICH_E6_R3 = ("ICH E6(R3) Guideline for Good Clinical Practice, final version adopted 6 January 2025 (International "
             "Council for Harmonisation)")
ICH_E9 = "ICH E9 Statistical Principles for Clinical Trials (International Council for Harmonisation, 1998)"
ISO_9001 = "ISO 9001:2015 Quality management systems - Requirements (International Organization for Standardization)"
CFR_PART_11 = "US Code of Federal Regulations, Title 21, Part 11, section 11.50"
KOBAK_2004 = "Kobak KA and co-authors (2004). Rater training in multicenter clinical trials: issues and recommendations"
KOBAK_2010 = ("Kobak KA, Leuchter A, DeBrota D, Engelhardt N, Williams JBW, Cook IA, Leon AC, Alpert J (2010). Site "
              "versus centralized raters in a clinical depression trial: impact on patient selection and placebo "
              "response. PubMed id 20520295")
KOO_LI_2016 = ("Koo TK, Li MY (2016). A guideline of selecting and reporting intraclass correlation coefficients for "
               "reliability research. Journal of Chiropractic Medicine 15(2):155-163. doi:10.1016/j.jcm.2016.02.012")
LACHIN_2004 = "Lachin JM (2004). The role of measurement reliability in clinical trials. Clinical Trials (SAGE)"
MCGRAW_WONG_1996 = ("McGraw KO, Wong SP (1996). Forming inferences about some intraclass correlation coefficients. "
                    "Psychological Methods 1(1):30-46. doi:10.1037/1082-989X.1.1.30")
MULLER_SZEGEDI_2002 = ("Müller MJ, Szegedi A (2002). Effects of interrater reliability of psychopathologic assessment "
                       "on power and sample size calculations in clinical trials. Journal of Clinical "
                       "Psychopharmacology 22(3):318-325. doi:10.1097/00004714-200206000-00013")
MULSANT_2002 = ("Mulsant BH and co-authors (2002). Interrater reliability in "
                "clinical trials of depressive disorders. American Journal of Psychiatry 159(9):1598-1600. "
                "doi:10.1176/appi.ajp.159.9.1598")
NUNNALLY_BERNSTEIN_1994 = "Nunnally JC, Bernstein IH (1994). Psychometric Theory, 3rd edition. New York: McGraw-Hill"
SHROUT_FLEISS_1979 = ("Shrout PE, Fleiss JL (1979). Intraclass correlations: uses in assessing rater reliability. "
                      "Psychological Bulletin 86(2):420-428. doi:10.1037/0033-2909.86.2.420")
SPIRIT_2013 = ("Chan A-W, Tetzlaff JM, Altman DG, Laupacis A, Gøtzsche PC, Krleža-Jerić K, Hróbjartsson A, Mann H, "
               "Dickersin K, Berlin JA, Doré CJ, Parulekar WR, Summerskill WSM, Groves T, Schulz KF, Sox HC, Rockhold FW, "
               "Rennie D, Moher D (2013). SPIRIT 2013 Statement: defining standard protocol items for clinical trials. "
               "Annals of Internal Medicine 158(3):200-207. doi:10.7326/0003-4819-158-3-201302050-00583")
WALTER_1998 = ("Walter SD, Eliasziw M, Donner A (1998). Sample size and optimal designs for reliability studies. "
               "Statistics in Medicine 17:101-110")
WEIR_2005 = ("Weir JP (2005). Quantifying test-retest reliability using the intraclass correlation coefficient and "
             "the SEM. Journal of Strength and Conditioning Research 19(1):231-240. doi:10.1519/15184.1")


def cite(*parts: str) -> str:
    """One source string from several citations, each with the point it supports."""
    return "; ".join(parts)


def split_sources(source: str) -> list[str]:
    """The citations of a source string: split at "; " outside parentheses."""
    parts, depth, start = [], 0, 0
    for index, char in enumerate(source):
        if char == "(":
            depth += 1
        elif char == ")":
            depth = max(0, depth - 1)
        elif char == ";" and depth == 0 and source.startswith("; ", index):
            parts.append(source[start:index].strip())
            start = index + 2
    parts.append(source[start:].strip())
    return [part for part in parts if part]
GUENTHER_1981 = ("Guenther WC (1981). Sample size formulas for normal theory t tests. The American Statistician "
                 "35(4):243-244")
E6 = ICH_E6_R3
