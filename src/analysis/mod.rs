//! Analysis: twist-angle series to period, segment equilibria, G and its uncertainty budget.
