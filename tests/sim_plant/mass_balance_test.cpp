// Mass balances over a dynamic run (2 days; 0.6 days in sanitizer builds): oxygen demand (COD)
// and nitrogen, in = out + accumulated, within 0.1 % of what came in. The plant is Marrowby (two
// trains, diurnal and rain influent, DO loops, a blower trip and a power failure added here), so
// flows, loops and events all take part.
// Oxygen demand counts dissolved oxygen as negative COD and nitrate at -4.57 g O2/g N; what leaves
// it besides effluent and waste sludge is the oxygen supplied by aeration and the nitrate reduced
// to N2 gas (1.71 g O2/g N relative to ammonium); see floc/sim/asm1.hpp. (The balance itself is
// common practice; the ASM1 stoichiometry it rests on is Henze et al. 1987.)
#include "support.hpp"

#include <gtest/gtest.h>

namespace {

using namespace floc::sim;

#ifdef FLOC_SIM_TESTS_SANITIZED
constexpr double run_days = 0.6;  // sanitizer builds: a shorter run, still with both events
#else
constexpr double run_days = 2.0;
#endif

TEST(MassBalance, OxygenDemandAndNitrogenCloseOverADynamicRun) {
    scenario s = test::marrowby();
    s.events.push_back(test::scheduled(event_kind::blower_trip, 0.4 * 86400.0, 0.5 * 86400.0, 1, 0.0));
    s.events.push_back(test::scheduled(event_kind::power_failure, 0.52 * 86400.0, 0.55 * 86400.0, no_index, 0.0));
    s.influent.rain.events_per_week = 7.0;  // a rain event every day
    simulation sim = make_simulation(s, test::marrowby_steady_state());
    const plant_model& model = sim.model();
    const double od0 = model.oxygen_demand_inventory(sim.state().data());
    const double n0 = model.nitrogen_inventory(sim.state().data());
    ASSERT_TRUE(sim.advance_to(run_days * 86400.0)) << sim.error();
    const std::vector<double>& x = sim.state();
    const double* acc = x.data() + model.layout().accumulators();
    const double od_in = acc[acc_od_in];
    const double od_out = acc[acc_od_effluent] + acc[acc_od_waste] + acc[acc_oxygen_transferred] -
                          asm1::n2_oxygen_equivalent * acc[acc_n2_produced];
    const double od_stored = model.oxygen_demand_inventory(x.data()) - od0;
    EXPECT_GT(od_in, 5e5);
    EXPECT_NEAR(od_in, od_out + od_stored, 1e-3 * od_in)
        << "in " << od_in << " out " << od_out << " stored " << od_stored;

    const double n_in = acc[acc_n_in];
    const double n_out = acc[acc_n_effluent] + acc[acc_n_waste] + acc[acc_n2_produced];
    const double n_stored = model.nitrogen_inventory(x.data()) - n0;
    EXPECT_GT(n_in, 5e4);
    EXPECT_NEAR(n_in, n_out + n_stored, 1e-3 * n_in) << "in " << n_in << " out " << n_out << " stored " << n_stored;
    // Denitrification and aeration did take part.
    EXPECT_GT(acc[acc_n2_produced], 0.05 * n_in);
    EXPECT_GT(acc[acc_oxygen_transferred], 0.2 * od_in);
}

} // namespace
