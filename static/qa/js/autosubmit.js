// Submit a filter form as soon as a [data-autosubmit] control changes (the button stays for no-JS use).
for (const control of document.querySelectorAll("[data-autosubmit]")) {
  control.addEventListener("change", () => control.form?.requestSubmit());
}
