//! C ABI for clout. Built in a later step.
