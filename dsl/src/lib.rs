//! The clout rule language (text to the clout-core rule IR). Built in a later step.
