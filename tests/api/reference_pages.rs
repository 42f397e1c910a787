//! Reference pages (`/minerals`, `/minerals/{id}`).
