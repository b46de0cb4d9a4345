// Minimum aerobic SRT for nitrification from nitrifier growth kinetics with Arrhenius
// correction. Parameter sets: Metcalf & Eddy, Wastewater Engineering, 4th ed. (2003) Table 8-11
// (values from memory) and 5th ed. (2014) Table 8-14, AOB (values as quoted in the public
// repository AnnaValls/ecoinvent, dataModel/constants.js and techs/nitrification.js). The
// expected results are computed from the formula (regression values), not published answers.
#include "floc/advisors/nitrification.hpp"

#include <gtest/gtest.h>

namespace {

using namespace floc::advisors;
constexpr double day = 86400.0;

// In the style of Metcalf & Eddy 4th ed. Example 8-3: 12 degC, NH4-N 0.5 mg/L, DO 2.0 mg/L,
// safety factor 1.5. Computed: mu_max 0.4365, b 0.0585, K_N 0.489, mu_net 0.1180 /d,
// SRT_min 8.47 d, design 12.7 d (the book's answer is about 12.8 d, from memory; it was not found
// in any retrieved source, so the test holds the computed 12.7 d).
TEST(MinimumAerobicSrt, MetcalfEddy4thAt12C) {
    const nitrifier_params p{nitrifier_kinetics::metcalf_eddy_4th, 1.5, 0.5, 2.0};
    const aerobic_srt s = minimum_aerobic_srt(p, 12.0);
    EXPECT_NEAR(s.mu_max_per_d, 0.4365, 0.0005);
    EXPECT_NEAR(s.decay_per_d, 0.0585, 0.0005);
    EXPECT_NEAR(s.ammonia_half_saturation_g_per_m3, 0.4894, 0.0005);
    EXPECT_NEAR(s.net_growth_per_d, 0.1180, 0.0005);
    ASSERT_TRUE(s.sustainable);
    EXPECT_NEAR(s.minimum_s / day, 8.47, 0.02);
    EXPECT_NEAR(s.design_s / day, 12.7, 0.05);
}

// The 5th-ed. AOB set at the same conditions: mu_net 0.0712 /d, SRT_min 14.0 d, design 21.1 d
// (computed from the formula) - the parameter set matters, hence it is a config choice. These are
// the design conditions of Metcalf & Eddy 5th ed. Example 8-3 (p. 756: 12 degC, NH4-N 0.50 g/m3,
// DO 2.0 g/m3, peak/average TKN factor 1.5), as transcribed in AnnaValls/ecoinvent,
// exercise_metcalf_bod_rem_with_nitrification.php; the book's own answer was not retrieved.
TEST(MinimumAerobicSrt, MetcalfEddy5thAt12C) {
    const nitrifier_params p{nitrifier_kinetics::metcalf_eddy_5th, 1.5, 0.5, 2.0};
    const aerobic_srt s = minimum_aerobic_srt(p, 12.0);
    EXPECT_NEAR(s.net_growth_per_d, 0.0712, 0.0005);
    EXPECT_NEAR(s.minimum_s / day, 14.04, 0.05);
    EXPECT_NEAR(s.design_s / day, 21.06, 0.1);
}

TEST(MinimumAerobicSrt, ColderNeedsLonger) {
    for (const auto k :
         {nitrifier_kinetics::metcalf_eddy_4th, nitrifier_kinetics::metcalf_eddy_5th}) {
        const nitrifier_params p{k, 1.5, 1.0, 2.0};
        double last = 0.0;
        for (double t = 30.0; t >= 6.0; t -= 1.0) {
            const aerobic_srt s = minimum_aerobic_srt(p, t);
            ASSERT_TRUE(s.sustainable) << t;
            EXPECT_GT(s.minimum_s, last) << t;
            last = s.minimum_s;
        }
    }
}

TEST(MinimumAerobicSrt, TooColdIsNotSustainable) {
    const nitrifier_params p{nitrifier_kinetics::metcalf_eddy_5th, 1.5, 0.5, 2.0};
    const aerobic_srt s = minimum_aerobic_srt(p, 0.0);
    EXPECT_LT(s.net_growth_per_d, 0.0);
    EXPECT_FALSE(s.sustainable);
    EXPECT_EQ(s.minimum_s, 0.0);
}

TEST(MinimumAerobicSrt, SafetyFactorScalesTheDesignValue) {
    nitrifier_params p{nitrifier_kinetics::metcalf_eddy_4th, 1.0, 0.5, 2.0};
    const double one = minimum_aerobic_srt(p, 15.0).design_s;
    p.safety_factor = 2.5;
    EXPECT_NEAR(minimum_aerobic_srt(p, 15.0).design_s, 2.5 * one, 1e-9);
}

} // namespace
